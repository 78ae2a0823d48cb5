// The measuring page: keep the photo on this device, send it, show the reading, let the user
// move the measured area. A photo the server cannot be reached for waits in the send queue.
import { RegionEditor } from "./region.js";
import { paintScale, showReading } from "./result.js";
import { discard, keepPhoto, onQueueChange, sendKept, sendWhenPossible } from "./send_queue.js";
import { clockTime, listWaiting } from "./waiting_list.js";
import { clearMap, mapStatus, showMap } from "./tilemap.js";

const $ = (id) => document.getElementById(id);
// The form token of a paired device's session ("" where the server needs none); sent with
// every request that changes something.
const FORM_TOKEN = document.querySelector('meta[name="csrf-token"]')?.content || "";
const TOKEN_HEADERS = FORM_TOKEN ? { "X-CSRF-Token": FORM_TOKEN } : {};
const UNIT_KEY = "glowtemp.unit";
const PROFILE_KEY = "glowtemp.profile";
const SCENE_KEY = "glowtemp.scene";
const SCENE_CHOICES = [...document.querySelectorAll("[data-scene-choice]")];

const state = {
  unit: remembered(UNIT_KEY, "c") === "f" ? "f" : "c",
  reading: null,     // the latest reading (with its id)
  file: null,        // the photo file, kept for a new upload when no area was found
  photoUrl: null,
  scale: null,
  profile: "",       // the chosen camera profile's name; "" for none
  scene: "other",    // what new photos show (kiln, steel, other): the brightness channel's emissivity
  sequence: 0,       // answers to older region requests are dropped
  watching: null,    // the upload id of the photo this page is sending and waiting for
  sentMeanwhile: null,  // {photo, body} of a waiting photo sent while another reading was shown
};

function remembered(key, fallback) {
  try { return localStorage.getItem(key) || fallback; } catch (e) { return fallback; }
}

function remember(key, value) {
  try { localStorage.setItem(key, value); } catch (e) { /* private mode: not remembered */ }
}

const editor = new RegionEditor($("overlay"), (text) => remeasure(text));

// The result card, the notes after the photo and the "another photo" button come and go together.
function showResultBlocks(visible) {
  for (const id of ["result", "map-section", "result-end"]) $(id).hidden = !visible;
}

function showProblem(message) {
  $("problem").textContent = message;
  $("problem").hidden = !message;
}

function showProgress(text, percent) {
  $("progress").hidden = text === null;
  if (text === null) return;
  $("progress-text").textContent = text;
  const bar = $("progress-bar");
  if (percent === null) bar.removeAttribute("value"); else bar.value = percent;
}

function choosePhotoKind(kind) {
  for (const chip of document.querySelectorAll("[data-shape]")) {
    chip.setAttribute("aria-pressed", String(chip.dataset.shape === kind));
  }
}

async function upload(file, regionText) {
  state.file = file;
  showProblem("");
  showResultBlocks(false);
  $("photo-section").hidden = true;
  $("measure-drawn").hidden = true;
  showProgress("Keeping the photo on this device…", null);
  let entry;
  try {
    entry = await keepPhoto(file, { region: regionText || "", profile: state.profile, scene: state.scene,
                                    sceneLabel: sceneLabel(state.scene) });
  } catch (error) {
    showProgress(null);
    showProblem(`This browser could not read the photo (${error.message}); take or choose it again.`);
    return;
  }
  state.watching = entry.uploadId;
  showProgress("Sending the photo… 0 %", 0);
  const answer = await sendKept(entry.uploadId, (share) => {
    if (share < 1) showProgress(`Sending the photo… ${Math.round(share * 100)} %`, share * 100);
    else showProgress("Reading the colour of the glow…", null);
  });
  state.watching = null;
  showProgress(null);
  if (answer.outcome === "stored") {
    showPhoto(file, answer.body);
    showResult(answer.body);
    return;
  }
  if (answer.outcome === "later") {
    showProblem(`Not measured yet: ${answer.entry.problem}. The photo is kept on this device and is sent ` +
      "by itself when glowtemp answers (see the photos waiting to send).");
    return;
  }
  await discard(entry.uploadId);  // refused while the user watches: the reason is shown here
  const body = answer.body || {};
  showProblem(body.error || `The server answered with an error (${answer.status}).`);
  if (body.draw_region) offerDrawing(file);
}

// A waiting measurement (no firing) was sent by itself: show it, or offer it if a reading is on show.
function sentByItself({ stored, body }) {
  if (!stored || stored.firingId !== null || stored.uploadId === state.watching) return;
  if (!state.reading && $("result").hidden && $("measure-drawn").hidden) {
    showPhoto(stored.photo, body);
    showResult(body);
    return;
  }
  state.sentMeanwhile = { photo: stored.photo, body };
  $("sent-meanwhile-text").textContent = `The photo taken ${clockTime(stored.takenAt)} was sent and measured.`;
  $("sent-meanwhile").hidden = false;
}

function showPhoto(file, reading) {
  if (state.photoUrl) URL.revokeObjectURL(state.photoUrl);
  state.photoUrl = URL.createObjectURL(file);
  const img = $("photo");
  img.onerror = () => { if (reading.id) img.src = reading.preview_url; img.onerror = null; };
  img.src = state.photoUrl;
  editor.setPhoto(reading.image.width, reading.image.height);
  $("photo-section").hidden = false;
}

// No glowing area stood out: show the photo with a circle to place by hand, then send again.
function offerDrawing(file) {
  if (state.photoUrl) URL.revokeObjectURL(state.photoUrl);
  state.photoUrl = URL.createObjectURL(file);
  const img = $("photo");
  img.onload = () => {
    img.onload = null;
    const w = img.naturalWidth, h = img.naturalHeight;
    editor.setPhoto(w, h);
    editor.setRegion({ kind: "circle", cx: Math.round(w / 2), cy: Math.round(h / 2), radius: Math.round(Math.min(w, h) / 6) });
    choosePhotoKind("circle");
    state.reading = null;
    $("photo-section").hidden = false;
    $("measure-drawn").hidden = false;
    $("again").hidden = false;
    $("region-status").textContent = "Place the outline on the glow, then measure.";
  };
  img.onerror = () => showProblem($("problem").textContent + " This browser cannot show the photo either.");
  img.src = state.photoUrl;
}

function showResult(reading) {
  state.reading = reading;
  $("scene-after").value = reading.scene || state.scene;  // what this reading was measured as
  clearMap();
  editor.setRegion(reading.region);
  choosePhotoKind(reading.region.kind);
  showReading(reading, state.unit);
  showResultBlocks(true);
  $("again").hidden = false;
  $("region-status").textContent = "";
  $("capture").hidden = true;
  $("result").scrollIntoView({ block: "start" });
}

async function remeasure(regionText) {
  if (!state.reading) return;  // no stored photo yet: the "Measure this area" button sends it
  const sequence = ++state.sequence;
  if (mapOnShow()) clearMap("The area, the camera profile or the scene changed: map it again to see its spots.");
  $("region-status").textContent = "Measuring this area…";
  const response = await fetch(`/api/readings/${state.reading.id}/region`, {
    method: "POST",
    headers: { "Content-Type": "application/json", ...TOKEN_HEADERS },
    body: JSON.stringify({ region: regionText, profile: state.profile, scene: $("scene-after").value }),
  }).catch(() => null);
  if (sequence !== state.sequence) return;
  const body = response ? await response.json().catch(() => ({})) : {};
  if (!response || !response.ok) {
    $("region-status").textContent = body.error || "The server could not be reached.";
    return;
  }
  state.reading = body;
  showReading(body, state.unit);
  $("region-status").textContent = "Measured again.";
}

function mapOnShow() {
  return !$("map-shown").hidden || $("map-make").disabled;
}

// Read the outlined area patch by patch; the answer is the reading again, with its map.
async function makeMap() {
  if (!state.reading) return;
  const sequence = ++state.sequence;
  $("map-make").disabled = true;
  mapStatus("Reading each patch of the area…");
  const response = await fetch(`/api/readings/${state.reading.id}/map`, {
    method: "POST",
    headers: { "Content-Type": "application/json", ...TOKEN_HEADERS },
    body: JSON.stringify({ region: editor.text(), profile: state.profile, scene: $("scene-after").value }),
  }).catch(() => null);
  if (sequence !== state.sequence) return;  // the area changed meanwhile: that answer is stale
  const body = response ? await response.json().catch(() => ({})) : {};
  $("map-make").disabled = false;
  if (!response || !response.ok) {
    mapStatus(body.error || "The server could not be reached. Is glowtemp still running?");
    return;
  }
  state.reading = body;
  showReading(body, state.unit);
  showMap(body, state.unit);
}

async function loadScale() {
  const response = await fetch("/api/scale");
  state.scale = await response.json();
  paintScale(state.scale, state.unit);
}

// The profile pickers, labelled in the unit on show (a profile's label gives the span of its pairs).
async function loadProfiles(unit) {
  const response = await fetch(`/api/profiles?unit=${unit}`).catch(() => null);
  if (!response || !response.ok) return;
  const { profiles } = await response.json();
  const wanted = remembered(PROFILE_KEY, "");
  state.profile = profiles.some((p) => p.name === wanted) ? wanted : "";
  for (const select of document.querySelectorAll("[data-profile]")) {
    select.replaceChildren(select.options[0]);  // keep "None: uncalibrated estimate"
    for (const profile of profiles) {
      const option = document.createElement("option");
      option.value = profile.name;
      option.textContent = profile.label;
      select.append(option);
    }
    select.value = state.profile;
  }
  for (const field of document.querySelectorAll("[data-profile-field]")) field.hidden = profiles.length === 0;
}

function setProfile(name) {
  state.profile = name;
  remember(PROFILE_KEY, name);
  for (const select of document.querySelectorAll("[data-profile]")) select.value = name;
  if (state.reading) remeasure(editor.text());
}

function sceneLabel(scene) {
  const choice = SCENE_CHOICES.find((input) => input.value === scene);
  return choice ? choice.parentElement.textContent.trim() : scene;
}

// The scene for new photos (remembered on this device); with a reading on show, it is measured again as it.
function setScene(scene, remeasureShown) {
  state.scene = SCENE_CHOICES.some((input) => input.value === scene) ? scene : "other";
  remember(SCENE_KEY, state.scene);
  for (const input of SCENE_CHOICES) input.checked = input.value === state.scene;
  if (remeasureShown && state.reading) {
    $("scene-after").value = state.scene;
    remeasure(editor.text());
  }
}

function showUnit(unit) {
  const changed = unit !== state.unit;
  state.unit = unit;
  if (changed) loadProfiles(unit);
  for (const chip of document.querySelectorAll("[data-unit]")) {
    chip.setAttribute("aria-pressed", String(chip.dataset.unit === unit));
  }
  if (state.scale) paintScale(state.scale, unit);
  if (state.reading) showReading(state.reading, unit);
  if (state.reading?.temperature_map) showMap(state.reading, unit);
}

for (const input of [$("camera-input"), $("file-input")]) {
  input.addEventListener("change", () => {
    if (input.files.length) upload(input.files[0]);
    input.value = "";
  });
}
for (const chip of document.querySelectorAll("[data-unit]")) {
  chip.addEventListener("click", () => { remember(UNIT_KEY, chip.dataset.unit); showUnit(chip.dataset.unit); });
}
for (const chip of document.querySelectorAll("[data-shape]")) {
  chip.addEventListener("click", () => { choosePhotoKind(chip.dataset.shape); editor.setKind(chip.dataset.shape); });
}
$("measure-drawn").addEventListener("click", () => upload(state.file, editor.text()));
for (const input of SCENE_CHOICES) input.addEventListener("change", () => { if (input.checked) setScene(input.value, false); });
$("scene-after").addEventListener("change", () => setScene($("scene-after").value, true));
$("map-make").addEventListener("click", makeMap);
for (const select of document.querySelectorAll("[data-profile]")) {
  select.addEventListener("change", () => setProfile(select.value));
}
$("sent-meanwhile-show").addEventListener("click", () => {
  const { photo, body } = state.sentMeanwhile;
  state.sentMeanwhile = null;
  $("sent-meanwhile").hidden = true;
  showProblem("");
  showPhoto(photo, body);
  showResult(body);
});
$("again").addEventListener("click", () => {
  $("capture").hidden = false;
  showResultBlocks(false);
  $("photo-section").hidden = true;
  $("again").hidden = true;
  showProblem("");
  state.reading = null;
  window.scrollTo(0, 0);
  $("camera-input").focus();
});

showUnit(state.unit);
setScene(remembered(SCENE_KEY, "other"), false);
loadScale();
loadProfiles(state.unit);
onQueueChange(sentByItself);
listWaiting();
sendWhenPossible();
