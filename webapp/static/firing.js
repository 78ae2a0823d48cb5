// A firing's page: every photo chosen or taken for the firing is kept on this device first,
// then sent with the values typed beside it. One that cannot be sent now waits in the send
// queue and goes into the firing at the time it was taken. Without scripts the form posts as
// a plain form.
import { discard, keepPhoto, onQueueChange, sendKept, sendWhenPossible } from "./send_queue.js";
import { listWaiting } from "./waiting_list.js";

const $ = (id) => document.getElementById(id);
const form = $("reading-form");
const firingId = Number(form.dataset.firingId);
const inputs = [$("reading-camera"), $("reading-file")];
const submit = $("reading-submit");
const status = $("reading-status");
const watching = new Set();  // upload ids this page sends while the user waits
$("reading-file").multiple = true;  // several saved photos at once, each at its own EXIF time

function chosenFiles() {
  return inputs.flatMap((input) => [...input.files]);
}

function say(text) {
  status.textContent = text;
  status.hidden = !text;
}

// The trusted values as the API takes them (reference_c or reference_f, cone, cone_state, magnet, note).
function trustedValues() {
  const value = (name) => (form.elements[name] ? form.elements[name].value.trim() : "");
  const magnet = form.elements.magnet && form.elements.magnet.checked ? form.elements.magnet.value : "";
  const trusted = { cone: value("cone"), cone_state: value("cone_state"), magnet, note: value("note") };
  if (value("reference")) trusted[value("reference_unit") === "f" ? "reference_f" : "reference_c"] = value("reference");
  return trusted;
}

function clearForm() {
  for (const input of inputs) input.value = "";
  for (const name of ["reference", "cone", "cone_state", "note"]) if (form.elements[name]) form.elements[name].value = "";
  if (form.elements.magnet) form.elements.magnet.checked = false;
  $("chosen-photo").textContent = "No photo chosen yet.";
}

// Nothing typed or chosen and no box in use: reloading the page loses nothing.
function pageAtRest() {
  const typing = document.activeElement && document.activeElement.matches("form textarea, form select, form input:not([type=file])");
  return chosenFiles().length === 0 && !Object.values(trustedValues()).some((v) => v) && !typing;
}

const SHOW_KEY = "glowtemp.showReading";

// Load the page again, then bring the new reading into view (one navigation, whatever the address).
function showReading(readingId) {
  try { sessionStorage.setItem(SHOW_KEY, String(readingId)); } catch (e) { /* private mode: not scrolled to */ }
  location.reload();
}

function showAskedReading() {
  let readingId = null;
  try {
    readingId = sessionStorage.getItem(SHOW_KEY);
    sessionStorage.removeItem(SHOW_KEY);
  } catch (e) { /* private mode */ }
  const card = readingId && $(`reading-${readingId}`);
  if (!card) return;
  history.replaceState(null, "", `${location.pathname}${location.search}#reading-${readingId}`);
  card.scrollIntoView({ block: "start" });
}

async function sendReadings(event) {
  event.preventDefault();
  const files = chosenFiles();
  const trusted = trustedValues();
  if (!files.length) { $("chosen-photo").textContent = "Take or choose a photo first."; return; }
  if (files.length > 1 && Object.values(trusted).some((v) => v)) {
    say(`Thermocouple, cone, magnet and note belong to one photo: choose one photo to add them, or empty those boxes to add the ${files.length} photos at their own times.`);
    return;
  }
  submit.disabled = true;
  say("Keeping the photo on this device…");
  const profile = form.elements.profile ? form.elements.profile.value : "";
  const where = { firingId, firingName: form.dataset.firingName, trusted, profile };
  const entries = [];
  try {
    for (const file of files) entries.push(await keepPhoto(file, where));
  } catch (error) {
    for (const entry of entries) await discard(entry.uploadId);
    submit.disabled = false;
    say(`This browser could not read the photo (${error.message}); nothing was sent. Take or choose it again.`);
    return;
  }
  entries.forEach((entry) => watching.add(entry.uploadId));
  const outcomes = [];
  for (const [n, entry] of entries.entries()) {
    const which = entries.length > 1 ? ` ${n + 1} of ${entries.length}` : "";
    say(`Sending the photo${which}… 0 %`);
    outcomes.push(await sendKept(entry.uploadId, (share) => {
      say(share < 1 ? `Sending the photo${which}… ${Math.round(share * 100)} %` : `Measuring the photo${which}…`);
    }));
  }
  submit.disabled = false;
  entries.forEach((entry) => watching.delete(entry.uploadId));  // sent again later: shown when stored
  finish(outcomes);
}

function finish(outcomes) {
  const stored = outcomes.filter((o) => o.outcome === "stored");
  const waiting = outcomes.filter((o) => o.outcome === "later");
  const refused = outcomes.filter((o) => o.outcome === "refused");
  if (stored.length === outcomes.length) { showReading(stored[stored.length - 1].body.id); return; }
  if (outcomes.length === 1 && refused.length === 1) {
    // One photo refused while the user watches: it stays in the form to be put right.
    discard(refused[0].entry.uploadId);
    say(`Not added: ${refused[0].entry.problem}`);
    return;
  }
  clearForm();
  const parts = [];
  if (stored.length) parts.push(`${stored.length} added (reload to see them)`);
  if (waiting.length) {
    const kept = waiting.length === 1 ? "the photo is kept on this device and is sent by itself"
      : `${waiting.length} photos are kept on this device and are sent by themselves`;
    parts.push(`not sent yet: ${waiting[0].entry.problem}. ${kept[0].toUpperCase()}${kept.slice(1)} when glowtemp answers`);
  }
  if (refused.length) parts.push(`${refused.length} not taken by the server: see the photos waiting to send`);
  const text = parts.join("; ");
  say(`${text[0].toUpperCase()}${text.slice(1)}.`);
}

// A waiting photo of this firing was sent by itself: show it when that loses nothing.
function sentByItself({ stored, body }) {
  if (!stored || stored.firingId !== firingId || watching.has(stored.uploadId)) return;
  if (pageAtRest()) { showReading(body.id); return; }
  say("A waiting photo was added to this firing: reload the page to see it.");
}

form.addEventListener("change", (event) => {
  if (event.target.type !== "file") return;
  for (const input of inputs) if (input !== event.target) input.value = "";  // the latest choice counts
  const files = chosenFiles();
  $("chosen-photo").textContent = files.length === 1 ? `Photo: ${files[0].name}` : `${files.length} photos: ${files.map((f) => f.name).join(", ")}`;
  if (!files.length) $("chosen-photo").textContent = "No photo chosen yet.";
});
form.addEventListener("submit", sendReadings);
showAskedReading();
onQueueChange(sentByItself);
listWaiting();
sendWhenPossible();
