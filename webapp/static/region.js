// The measured area drawn over the photo: a circle or a rectangle in photo pixels.
// Drag the outline to move it, drag the handle to resize it; arrow keys and + / - do the same.
// The SVG's viewBox is the photo's pixel grid, so shapes are drawn in photo coordinates.

const SVG = "http://www.w3.org/2000/svg";
const HANDLE_CSS_PX = 18;   // visible handle radius on screen
const GRIP_CSS_PX = 34;     // touch radius of the handle, large enough for a gloved finger
const LINE_CSS_PX = 3;
const MIN_SIZE_PX = 4;      // smallest radius or side, in photo pixels

function element(name, attributes) {
  const node = document.createElementNS(SVG, name);
  for (const [key, value] of Object.entries(attributes)) node.setAttribute(key, value);
  return node;
}

export class RegionEditor {
  constructor(svg, onCommit) {
    this.svg = svg;
    this.onCommit = onCommit;
    this.width = 1;
    this.height = 1;
    this.region = null;
    this.drag = null;
    this.keyTimer = null;
    this.group = element("g", { tabindex: "0", role: "group",
      "aria-label": "Measured area. Arrow keys move it, plus and minus resize it." });
    this.shadow = element("circle", { class: "shape-shadow" });
    this.shape = element("circle", { class: "shape" });
    this.grip = element("circle", { class: "handle-ring" });
    this.handle = element("circle", { class: "handle" });
    this.group.append(this.shadow, this.shape, this.handle, this.grip);
    svg.append(this.group);
    this.shape.addEventListener("pointerdown", (e) => this.start(e, "move"));
    this.grip.addEventListener("pointerdown", (e) => this.start(e, "resize"));
    this.handle.addEventListener("pointerdown", (e) => this.start(e, "resize"));
    svg.addEventListener("pointermove", (e) => this.move(e));
    svg.addEventListener("pointerup", (e) => this.end(e));
    svg.addEventListener("pointercancel", (e) => this.end(e));
    this.group.addEventListener("keydown", (e) => this.key(e));
    new ResizeObserver(() => this.draw()).observe(svg);
  }

  setPhoto(width, height) {
    this.width = width;
    this.height = height;
    this.svg.setAttribute("viewBox", `0 0 ${width} ${height}`);
  }

  // region: the reading's region dict {kind, x, y, width, height | cx, cy, radius}
  setRegion(region) {
    this.region = { ...region };
    this.draw();
  }

  // Switch between circle and rectangle, keeping the centre and size.
  setKind(kind) {
    if (!this.region || this.region.kind === kind) return;
    const r = this.region;
    if (kind === "circle") {
      const radius = Math.max(MIN_SIZE_PX, Math.round(Math.min(r.width, r.height) / 2));
      this.region = { kind, cx: Math.round(r.x + r.width / 2), cy: Math.round(r.y + r.height / 2), radius };
    } else {
      this.region = { kind, x: r.cx - r.radius, y: r.cy - r.radius, width: 2 * r.radius, height: 2 * r.radius };
    }
    this.clamp();
    this.draw();
    this.commit();
  }

  // The region in the text form the API parses: "X,Y,W,H" or "circle:CX,CY,R".
  text() {
    const r = this.region;
    return r.kind === "circle" ? `circle:${r.cx},${r.cy},${r.radius}` : `${r.x},${r.y},${r.width},${r.height}`;
  }

  photoPerCssPixel() {
    const box = this.svg.getBoundingClientRect();
    return box.width > 0 ? this.width / box.width : 1;
  }

  toPhoto(event) {
    const box = this.svg.getBoundingClientRect();
    return {
      x: ((event.clientX - box.left) * this.width) / box.width,
      y: ((event.clientY - box.top) * this.height) / box.height,
    };
  }

  clamp() {
    const r = this.region;
    const w = this.width, h = this.height;
    if (r.kind === "circle") {
      r.radius = Math.round(Math.min(Math.max(r.radius, MIN_SIZE_PX), Math.min(w, h) / 2));
      r.cx = Math.round(Math.min(Math.max(r.cx, r.radius), w - r.radius));
      r.cy = Math.round(Math.min(Math.max(r.cy, r.radius), h - r.radius));
    } else {
      r.width = Math.round(Math.min(Math.max(r.width, MIN_SIZE_PX), w));
      r.height = Math.round(Math.min(Math.max(r.height, MIN_SIZE_PX), h));
      r.x = Math.round(Math.min(Math.max(r.x, 0), w - r.width));
      r.y = Math.round(Math.min(Math.max(r.y, 0), h - r.height));
    }
  }

  handlePoint() {
    const r = this.region;
    if (r.kind === "circle") {
      return { x: r.cx + r.radius * Math.SQRT1_2, y: r.cy + r.radius * Math.SQRT1_2 };
    }
    return { x: r.x + r.width, y: r.y + r.height };
  }

  draw() {
    const r = this.region;
    if (!r) return;
    const scale = this.photoPerCssPixel();
    const kind = r.kind === "circle" ? "circle" : "rect";
    if (this.shape.tagName !== kind) {
      const shadow = element(kind, { class: "shape-shadow" });
      const shape = element(kind, { class: "shape" });
      shape.addEventListener("pointerdown", (e) => this.start(e, "move"));
      this.shadow.replaceWith(shadow);
      this.shape.replaceWith(shape);
      this.shadow = shadow;
      this.shape = shape;
    }
    for (const node of [this.shadow, this.shape]) {
      if (kind === "circle") {
        node.setAttribute("cx", r.cx); node.setAttribute("cy", r.cy); node.setAttribute("r", r.radius);
      } else {
        node.setAttribute("x", r.x); node.setAttribute("y", r.y);
        node.setAttribute("width", r.width); node.setAttribute("height", r.height);
      }
    }
    this.shape.setAttribute("stroke-width", LINE_CSS_PX * scale);
    this.shadow.setAttribute("stroke-width", (LINE_CSS_PX + 3) * scale);
    const p = this.handlePoint();
    for (const [node, size] of [[this.handle, HANDLE_CSS_PX], [this.grip, GRIP_CSS_PX]]) {
      node.setAttribute("cx", p.x); node.setAttribute("cy", p.y); node.setAttribute("r", size * scale);
    }
    this.handle.setAttribute("stroke-width", 2 * scale);
  }

  start(event, mode) {
    if (!this.region) return;
    event.preventDefault();
    this.svg.setPointerCapture(event.pointerId);
    this.drag = { mode, from: this.toPhoto(event), region: { ...this.region }, moved: false };
  }

  move(event) {
    if (!this.drag) return;
    const at = this.toPhoto(event);
    const dx = at.x - this.drag.from.x, dy = at.y - this.drag.from.y;
    const was = this.drag.region;
    const r = { ...was };
    if (this.drag.mode === "move") {
      if (r.kind === "circle") { r.cx = was.cx + dx; r.cy = was.cy + dy; }
      else { r.x = was.x + dx; r.y = was.y + dy; }
    } else if (r.kind === "circle") {
      r.radius = Math.hypot(at.x - was.cx, at.y - was.cy);
    } else {
      r.width = Math.max(MIN_SIZE_PX, at.x - was.x);
      r.height = Math.max(MIN_SIZE_PX, at.y - was.y);
    }
    this.region = r;
    this.clamp();
    this.drag.moved = true;
    this.draw();
  }

  end(event) {
    if (!this.drag) return;
    const moved = this.drag.moved;
    this.drag = null;
    if (this.svg.hasPointerCapture(event.pointerId)) this.svg.releasePointerCapture(event.pointerId);
    if (moved) this.commit();
  }

  key(event) {
    const r = this.region;
    if (!r) return;
    const step = Math.max(1, Math.round(Math.min(this.width, this.height) / 50));
    const moves = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, -step], ArrowDown: [0, step] };
    if (moves[event.key]) {
      const [dx, dy] = moves[event.key];
      if (r.kind === "circle") { r.cx += dx; r.cy += dy; } else { r.x += dx; r.y += dy; }
    } else if (["+", "=", "-", "−"].includes(event.key)) {
      const grow = event.key === "+" || event.key === "=" ? 1.1 : 1 / 1.1;
      if (r.kind === "circle") r.radius *= grow;
      else {
        const cx = r.x + r.width / 2, cy = r.y + r.height / 2;
        r.width *= grow; r.height *= grow; r.x = cx - r.width / 2; r.y = cy - r.height / 2;
      }
    } else {
      return;
    }
    event.preventDefault();
    this.clamp();
    this.draw();
    clearTimeout(this.keyTimer);
    this.keyTimer = setTimeout(() => this.commit(), 450);
  }

  commit() {
    this.onCommit(this.text(), this.region);
  }
}
