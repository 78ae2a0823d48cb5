// "Waiting to send": the photos kept on this device that the server has not stored yet, each
// with its time, where it goes, and buttons to send it now or discard it.
import { discard, onQueueChange, sendKept, waitingEntries } from "./send_queue.js";

const $ = (id) => document.getElementById(id);
const thumbnails = [];

function twoDigits(n) {
  return String(n).padStart(2, "0");
}

const MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];

// "14:05" today, "3 May 14:05" on another day (this device's clock and time zone).
export function clockTime(ms) {
  const date = new Date(ms);
  const time = `${twoDigits(date.getHours())}:${twoDigits(date.getMinutes())}`;
  return date.toDateString() === new Date().toDateString() ? time : `${date.getDate()} ${MONTHS[date.getMonth()]} ${time}`;
}

// "14:05", "14:05 and 14:35", "14:05, 14:20 and 14:35"; a longer list as "14:05 to 15:10".
function timeList(times) {
  if (times.length > 4) return `${times[0]} to ${times[times.length - 1]}`;
  if (times.length === 1) return times[0];
  return `${times.slice(0, -1).join(", ")} and ${times[times.length - 1]}`;
}

function plural(count, word) {
  return `${count} ${word}${count === 1 ? "" : "s"}`;
}

export function heading(entries) {
  const waiting = entries.filter((e) => !e.refused);
  const refused = entries.length - waiting.length;
  const parts = [];
  if (waiting.length) {
    parts.push(`${plural(waiting.length, "photo")} waiting to send, taken ${timeList(waiting.map((e) => clockTime(e.takenAt)))}`);
  }
  if (refused) parts.push(`${plural(refused, "photo")} the server did not take`);
  return parts.join("; ");
}

// What goes with the photo: its firing, what it shows and the trusted values typed with it.
function goesWith(entry) {
  const trusted = entry.trusted || {};
  const parts = [entry.firingId === null ? "measure only" : `into ${entry.firingName || `firing ${entry.firingId}`}`];
  if (entry.scene) parts.push((entry.sceneLabel || entry.scene).toLowerCase());
  if (trusted.reference_c) parts.push(`thermocouple ${trusted.reference_c} °C`);
  if (trusted.reference_f) parts.push(`thermocouple ${trusted.reference_f} °F`);
  if (trusted.cone) parts.push(`cone ${trusted.cone}${trusted.cone_state ? ` ${trusted.cone_state}` : ""}`);
  if (trusted.magnet) parts.push("magnet let go");
  if (trusted.note) parts.push(`note “${trusted.note.length > 40 ? `${trusted.note.slice(0, 40)}…` : trusted.note}”`);
  return parts.join(" · ");
}

function stateLine(entry) {
  const fragile = entry.fragile ? " This browser would not keep it: it is lost if this page is closed first." : "";
  if (entry.refused) return `Not taken: ${entry.problem}${fragile}`;
  if (entry.tries) return `Not sent yet (${plural(entry.tries, "try")}): ${entry.problem}.${fragile}`;
  return `Waiting to send.${fragile}`;
}

function button(text, className, action) {
  const node = document.createElement("button");
  node.type = "button";
  node.className = `chip ${className}`;
  node.textContent = text;
  node.addEventListener("click", action);
  return node;
}

function item(entry) {
  const li = document.createElement("li");
  li.className = "waiting-item";
  li.dataset.uploadId = entry.uploadId;
  const url = URL.createObjectURL(entry.photo);
  thumbnails.push(url);
  const picture = document.createElement("img");
  picture.src = url;
  picture.alt = "";
  picture.decoding = "async";
  picture.loading = "lazy";
  const words = document.createElement("div");
  const when = document.createElement("p");
  when.className = "waiting-when";
  when.textContent = `Taken ${clockTime(entry.takenAt)}`;
  const source = document.createElement("span");
  source.className = "muted";
  source.textContent = entry.takenFrom === "exif" ? " (camera clock)" : " (when this device got it)";
  when.append(source);
  const what = document.createElement("p");
  what.textContent = goesWith(entry);
  const state = document.createElement("p");
  state.className = entry.refused ? "waiting-state refused" : "waiting-state muted";
  state.textContent = stateLine(entry);
  words.append(when, what, state);
  const actions = document.createElement("div");
  actions.className = "waiting-actions";
  const send = button(entry.refused ? "Send again" : "Send now", "send-now", async () => {
    send.disabled = true;
    $("waiting-status").textContent = "Sending…";
    const { outcome, entry: tried } = await sendKept(entry.uploadId);
    $("waiting-status").textContent = outcome === "stored" ? "Sent and stored." : `Not stored: ${tried.problem}.`;
  });
  const confirm = button("Yes, discard this photo", "discard-yes", async () => {
    await discard(entry.uploadId);
    $("waiting-status").textContent = `The photo taken ${clockTime(entry.takenAt)} was discarded.`;
  });
  const keep = button("Keep it", "discard-no", () => { confirm.hidden = keep.hidden = true; ask.hidden = false; });
  const ask = button("Discard…", "discard", () => { confirm.hidden = keep.hidden = false; ask.hidden = true; confirm.focus(); });
  confirm.hidden = keep.hidden = true;
  actions.append(send, ask, confirm, keep);
  li.append(picture, words, actions);
  return li;
}

export async function showWaiting() {
  const entries = await waitingEntries();
  while (thumbnails.length) URL.revokeObjectURL(thumbnails.pop());
  $("waiting").hidden = entries.length === 0;
  $("waiting-title").textContent = heading(entries);
  $("waiting-list").replaceChildren(...entries.map(item));
}

// Keep the list up to date as photos are kept, sent and discarded.
export function listWaiting() {
  onQueueChange(() => showWaiting());
  showWaiting();
}
