// The temperature map of the measured area (the JSON form made by the core, under
// reading.temperature_map): the hottest and coolest patches with their bands, shown exactly as
// the core rounded them, and the server's drawing of the map. This file formats, it never
// computes temperatures.

const $ = (id) => document.getElementById(id);
const SIGN = { c: "°C", f: "°F" };
const FRAMES = { hottest: "framed white on the map", coolest: "framed blue on the map" };
const NAMES = { hottest: "Hottest spot", coolest: "Coolest spot" };

let drawnUrl = null;   // the blob: address of the picture on show
let drawing = 0;       // answers to older picture requests are dropped

function pick(tile, name, unit) {
  return tile[`${name}_${unit}`];
}

// Where a tile sits in its grid, in words: "top right", "on the left", "in the middle".
function whereWords(tile, rows, columns) {
  const third = (index, count) => (count < 2 ? 1 : Math.min(2, Math.floor(((index + 0.5) / count) * 3)));
  const across = ["left", "", "right"][third(tile.column, columns)];
  const down = ["top", "", "bottom"][third(tile.row, rows)];
  if (across && down) return `near the ${down} ${across}`;
  if (across || down) return `on the ${across || down}`;
  return "in the middle";
}

function extremeLine(key, tile, record, unit) {
  const line = document.createElement("li");
  line.dataset.tile = key;
  const dot = document.createElement("span");
  dot.className = "dot";
  dot.style.background = tile.estimate_colour_hex;
  const name = document.createElement("span");
  name.className = "spot-name";
  name.textContent = NAMES[key];
  const value = document.createElement("b");
  value.textContent = `${pick(tile, "temperature", unit)} ${SIGN[unit]}`;
  const [low, high] = pick(tile, "interval_95", unit);
  const band = document.createElement("span");
  band.className = "spot-band";
  band.textContent = `95 % band ${low} – ${high} ${SIGN[unit]}`;
  const where = document.createElement("span");
  where.className = "spot-where muted";
  where.textContent = `${whereWords(tile, record.rows, record.columns)}, ${FRAMES[key]}`;
  line.append(dot, name, value, band, where);
  return line;
}

function verdict(record) {
  const count = `${record.usable_tiles} of ${record.tiles.length} patches give an estimate.`;
  if (record.hottest === null) {
    return `None of the ${record.tiles.length} patches gives a single estimate; the map shows what each one gives.`;
  }
  if (record.bands_overlap === null) return `${count} With only one, the photo cannot say which part is hotter.`;
  if (record.bands_overlap) {
    return `${count} The hottest and coolest 95 % bands overlap, so this photo does not show for sure that one part is hotter.`;
  }
  return `${count} The hottest and coolest 95 % bands do not overlap: that part really is hotter.`;
}

function describe(record, unit) {
  const hot = record.hottest;
  if (hot === null) return "Temperature map of the measured area; no patch gives a single estimate.";
  const cool = record.coolest;
  return `Temperature map of the measured area: hottest spot ${pick(hot, "temperature", unit)} ${SIGN[unit]}, ` +
    `coolest ${pick(cool, "temperature", unit)} ${SIGN[unit]}.`;
}

export function mapStatus(text) {
  $("map-status").textContent = text;
}

// Fetch the drawing (an SVG image) so that a refusal can be shown in its own words.
async function showPicture(url, record, unit) {
  const turn = ++drawing;
  const picture = $("map-picture");
  $("map-full").hidden = true;
  mapStatus("Drawing the map…");
  const response = await fetch(url).catch(() => null);
  if (turn !== drawing) return;
  if (!response || !response.ok) {
    const body = response ? await response.json().catch(() => ({})) : {};
    mapStatus(body.error || "The map could not be drawn; the server could not be reached.");
    picture.hidden = true;
    return;
  }
  const blob = await response.blob();
  if (turn !== drawing) return;
  if (drawnUrl) URL.revokeObjectURL(drawnUrl);
  drawnUrl = URL.createObjectURL(blob);
  picture.onload = () => { if (turn === drawing) mapStatus(""); };
  picture.src = drawnUrl;
  picture.alt = describe(record, unit);
  picture.hidden = false;
  $("map-full").href = url;
  $("map-full").hidden = false;
}

// Show the reading's map (reading.temperature_map and reading.map_url) in °C or °F.
export function showMap(reading, unit) {
  const record = reading.temperature_map;
  const list = $("map-extremes");
  list.replaceChildren();
  if (record.hottest !== null) {
    list.append(extremeLine("hottest", record.hottest, record, unit));
    if (record.bands_overlap !== null) list.append(extremeLine("coolest", record.coolest, record, unit));
  }
  list.hidden = record.hottest === null;
  $("map-verdict").textContent = verdict(record);
  $("map-shown").hidden = false;
  $("map-make").hidden = true;
  $("map-lead").hidden = true;
  showPicture(`${reading.map_url}?unit=${unit.toUpperCase()}`, record, unit);
}

// Put the map away (a new photo, or the area or profile changed): the button offers it again.
export function clearMap(status) {
  drawing++;
  $("map-shown").hidden = true;
  $("map-make").hidden = false;
  $("map-make").disabled = false;
  $("map-lead").hidden = false;
  mapStatus(status || "");
  if (drawnUrl) URL.revokeObjectURL(drawnUrl);
  drawnUrl = null;
}
