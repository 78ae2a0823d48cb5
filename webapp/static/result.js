// Show a reading (the JSON form made by the core) on the page. Numbers are shown exactly as
// the core rounded them: this file formats, it never computes temperatures.

const $ = (id) => document.getElementById(id);
const SIGN = { c: "°C", f: "°F" };

function pick(reading, name, unit) {
  return reading[`${name}_${unit}`];
}

function unitSign(unit) {
  const span = document.createElement("span");
  span.className = "unit";
  span.textContent = SIGN[unit];
  return span;
}

function numeral(value, unit) {
  return [document.createTextNode(String(value)), unitSign(unit)];
}

const HEADLINES = {
  "not-glow": "No estimate: these colours do not look like glow",
  ambiguous: "No single answer from these colours",
  "no-data": "No estimate: no usable pixels",
  clipped: "No estimate: the glow is blown out",
};

function showValue(reading, unit) {
  const value = $("reading-value");
  const kicker = $("reading-kicker");
  const bands = $("bands");
  value.className = "reading-value";
  bands.replaceChildren();
  const central = pick(reading, "temperature", unit);
  const ceiling = pick(reading, "upper_bound", unit);
  if (central !== null && central !== undefined) {
    kicker.textContent = "Estimated temperature";
    value.replaceChildren(...numeral(central, unit));
    const [low68, high68] = pick(reading, "interval_68", unit);
    const [low95, high95] = pick(reading, "interval_95", unit);
    bands.append(bandLine("68 % band", low68, high68, unit));
    bands.append(bandLine("95 % band", low95, high95, unit));
  } else if (pick(reading, "interval_95", unit)) {
    // A wide band: the core gives a range only, since one number would look surer than it is.
    const [low95, high95] = pick(reading, "interval_95", unit);
    kicker.textContent = "Only a range from this photo";
    value.className = "reading-value ceiling";
    value.replaceChildren(...numeral(`${low95} – ${high95}`, unit));
    const note = document.createElement("li");
    note.textContent = "95 % band. It is too wide for one number to mean much; the notes below say how to narrow it.";
    bands.append(note);
  } else if (ceiling !== null && ceiling !== undefined) {
    kicker.textContent = "The colour sets only a ceiling";
    value.className = "reading-value ceiling";
    value.replaceChildren(document.createTextNode("below about "), ...numeral(ceiling, unit));
    const note = document.createElement("li");
    note.textContent = "95 % sure it is no hotter. Glow this deep red gives no lower limit from colour alone.";
    bands.append(note);
  } else {
    kicker.textContent = "No temperature from this photo";
    value.className = "reading-value verdict";
    value.textContent = HEADLINES[reading.status] || "No estimate from this photo";
  }
}

function bandLine(words, low, high, unit) {
  const line = document.createElement("li");
  const label = document.createElement("span");
  label.className = "band-label";
  label.textContent = words;
  const range = document.createElement("b");
  range.textContent = `${low} – ${high} ${SIGN[unit]}`;
  line.append(label, range);
  return line;
}

// Which channels set the band, and the emissivity range the brightness channel took for the
// scene: "From colour and brightness · emissivity 0.9-1, kiln".
function showChannels(reading) {
  const line = $("channels");
  const text = reading.channels_text;
  line.hidden = !text;
  if (!text) return;
  const parts = [text[0].toUpperCase() + text.slice(1)];
  if ((reading.channels || []).includes("brightness") && reading.emissivity) {
    const [low, high] = reading.emissivity;
    const choice = document.querySelector(`[data-scene-choice][value="${reading.scene}"]`);
    parts.push(`emissivity ${low}-${high}, ${choice ? choice.dataset.short : reading.scene}`);
  }
  line.textContent = parts.join(" · ");
}

function showGlowName(reading) {
  const line = $("glow-name");
  line.textContent = reading.glow_name ? `Heat colour: ${reading.glow_name}` : "";
  line.hidden = !reading.glow_name;
  $("glow-name-note").hidden = !reading.glow_name;
}

function showSwatches(reading, unit) {
  const region = $("region-patch");
  const estimate = $("estimate-patch");
  region.style.background = reading.region_colour_hex || "transparent";
  estimate.style.background = reading.estimate_colour_hex || "transparent";
  region.parentElement.hidden = !reading.region_colour_hex;
  estimate.parentElement.hidden = !reading.estimate_colour_hex;
  const central = pick(reading, "temperature", unit);
  $("estimate-caption").textContent = central === null || central === undefined
    ? "Glow colour at the estimate"
    : `Glow colour at ${central} ${SIGN[unit]}`;
}

function showWarnings(reading) {
  const list = $("warnings");
  list.replaceChildren();
  for (const warning of reading.warnings) {
    const item = document.createElement("li");
    item.dataset.code = warning.code;
    const what = document.createElement("p");
    what.style.margin = "0";
    what.textContent = warning.message;
    const fix = document.createElement("p");
    fix.className = "fix";
    const label = document.createElement("b");
    label.textContent = "What to do: ";
    fix.append(label, warning.fix);
    item.append(what, fix);
    list.append(item);
  }
  list.hidden = reading.warnings.length === 0;
}

function showFacts(reading) {
  const parts = [
    `${reading.pixels_used} of ${reading.pixels_total} pixels used`,
    `${reading.pixels_clipped} blown out`,
    `${reading.pixels_dark} too dark`,
    `${reading.pixels_outlier} out of line`,
    `colours read as ${reading.colour_space} (${reading.colour_space_source})`,
    reading.region.found ? "area found automatically" : "area set by hand",
  ];
  $("facts").textContent = parts.join(" · ");
}

// The scale: a strip painted with blackbody colours from GET /api/scale, with the band on it.
export function paintScale(scale, unit) {
  const box = $("scale");
  const span = scale.to_c - scale.from_c;
  const stops = scale.stops.map((s) => `${s.hex} ${(((s.temperature_c - scale.from_c) / span) * 100).toFixed(2)}%`);
  box.querySelector(".strip").style.background = `linear-gradient(to right, ${stops.join(", ")})`;
  const ticks = box.querySelector(".ticks");
  ticks.replaceChildren();
  for (const tick of scale.ticks[unit]) {
    const label = document.createElement("span");
    label.style.left = `${((tick.temperature_c - scale.from_c) / span) * 100}%`;
    label.textContent = tick === scale.ticks[unit][0] ? `${tick.label} ${SIGN[unit]}` : String(tick.label);
    ticks.append(label);
  }
  box.dataset.fromC = scale.from_c;
  box.dataset.toC = scale.to_c;
}

function place(node, low, high, from, to) {
  const clip = (t) => Math.min(Math.max(t, from), to);
  const a = ((clip(low) - from) / (to - from)) * 100;
  const b = ((clip(high) - from) / (to - from)) * 100;
  node.style.left = `${a}%`;
  node.style.width = `${Math.max(b - a, 0.8)}%`;
  node.hidden = false;
}

function markScale(reading, unit) {
  const box = $("scale");
  const from = Number(box.dataset.fromC), to = Number(box.dataset.toC);
  const band95 = box.querySelector(".band95"), band68 = box.querySelector(".band68");
  const mark = box.querySelector(".mark");
  for (const node of [band95, band68, mark]) node.hidden = true;
  let low = null, high = null;
  if (reading.temperature_c !== null) {
    [low, high] = reading.interval_95_c;
    place(band95, low, high, from, to);
    place(band68, ...reading.interval_68_c, from, to);
    const at = Math.min(Math.max(reading.temperature_c, from), to);
    mark.style.left = `${((at - from) / (to - from)) * 100}%`;
    mark.hidden = false;
  } else if (reading.interval_95_c) {
    [low, high] = reading.interval_95_c;
    place(band95, low, high, from, to);
  } else if (reading.upper_bound_c !== null) {
    [low, high] = [from, reading.upper_bound_c];
    place(band95, low, high, from, to);
  }
  $("scale-key").querySelector(".k68-line").hidden = band68.hidden;
  box.querySelector('[data-side="low"]').hidden = !(low !== null && low < from);
  box.querySelector('[data-side="high"]').hidden = !(high !== null && high > to);
  $("scale-box").hidden = !Number.isFinite(from) || (low === null && high === null);
  const central = pick(reading, "temperature", unit);
  box.setAttribute("aria-label", central === null || central === undefined
    ? "Temperature scale in blackbody colours"
    : `Temperature scale in blackbody colours, the estimate ${central} ${SIGN[unit]} marked with its bands`);
}

export function showReading(reading, unit) {
  showValue(reading, unit);
  showChannels(reading);
  const anyNumber = reading.temperature_c !== null || reading.interval_95_c || reading.upper_bound_c !== null;
  $("units").hidden = !anyNumber;
  showGlowName(reading);
  markScale(reading, unit);
  showSwatches(reading, unit);
  showWarnings(reading);
  showFacts(reading);
  $("notice").textContent = reading.notice;
  $("profile-used").textContent = reading.profile
    ? `Camera profile: ${reading.profile}`
    : "No camera profile: an uncalibrated estimate, with a wider band for the unknown camera.";
}
