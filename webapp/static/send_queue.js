// The send queue: every photo chosen or taken is kept in this browser's IndexedDB before it is
// sent, and stays there until the server has stored its reading or the user discards it.
//
// IndexedDB (W3C Indexed Database API 3.0) is open to plain-HTTP pages such as the studio
// server's LAN address, where service workers are not. Each entry carries a random upload id
// made here; the server stores one reading per upload id, so sending an entry again after a
// lost answer gets the reading already stored instead of a second one.
//
// The queue is sent whenever a page that uses it is open and the server answers: when the page
// loads, when the browser says it is online again, when the page becomes visible, and after a
// failed try with a growing wait (5 s, doubling, at most 2 min).

import { exifTakenAt } from "./exif_time.js";

const DATABASE = "glowtemp";
const STORE = "waiting";
const FIRST_WAIT_MS = 5000;
const LONGEST_WAIT_MS = 120000;
const SEND_TIMEOUT_MS = 300000;  // a 12 MP photo over a weak link may take minutes
const TRY_LATER = new Set([0, 401, 403, 408, 429, 500, 502, 503, 504]);
const FORM_TOKEN = document.querySelector('meta[name="csrf-token"]')?.content || "";

const listeners = new Set();
const inFlight = new Set();  // upload ids being sent from this page now
const retry = { ms: FIRST_WAIT_MS, timer: null, running: false, again: false };

// --- storage ------------------------------------------------------------------------------

// Entries by upload id in IndexedDB; each call resolves once its transaction has committed.
function indexedShelf(db) {
  const run = (mode, act) => new Promise((resolve, reject) => {
    const transaction = db.transaction(STORE, mode);
    const request = act(transaction.objectStore(STORE));
    transaction.oncomplete = () => resolve(request.result);
    transaction.onerror = () => reject(transaction.error);
    transaction.onabort = () => reject(transaction.error || new Error("The browser refused to keep the photo."));
  });
  return {
    put: (entry) => run("readwrite", (store) => store.put(entry)),
    get: (uploadId) => run("readonly", (store) => store.get(uploadId)),
    delete: (uploadId) => run("readwrite", (store) => store.delete(uploadId)),
    all: () => run("readonly", (store) => store.getAll()),
  };
}

// This page's memory: for an entry the browser would not keep (no IndexedDB in some private
// modes, or storage full). Such an entry is marked `fragile`: it is lost when the page closes.
function memoryShelf() {
  const entries = new Map();
  return {
    put: async (entry) => { entries.set(entry.uploadId, entry); },
    get: async (uploadId) => entries.get(uploadId),
    delete: async (uploadId) => { entries.delete(uploadId); },
    all: async () => [...entries.values()],
  };
}

const memory = memoryShelf();
let lasting = null;

function openLasting() {
  lasting = lasting || new Promise((resolve) => {
    try {
      const request = indexedDB.open(DATABASE, 1);
      request.onupgradeneeded = () => request.result.createObjectStore(STORE, { keyPath: "uploadId" });
      request.onsuccess = () => resolve(indexedShelf(request.result));
      request.onerror = () => resolve(null);
      request.onblocked = () => resolve(null);
    } catch (e) {
      resolve(null);
    }
  });
  return lasting;
}

async function shelves() {
  const shelf = await openLasting();
  return shelf ? [shelf, memory] : [memory];
}

const kept = {
  // Into IndexedDB, or into this page's memory (marked fragile) when the browser refuses.
  async put(entry) {
    const shelf = await openLasting();
    if (shelf && !entry.fragile) {
      try {
        await shelf.put(entry);
        return entry;
      } catch (e) { /* full or refused: keep it in memory below */ }
    }
    const fragile = { ...entry, fragile: true };
    await memory.put(fragile);
    return fragile;
  },
  async get(uploadId) {
    for (const shelf of await shelves()) {
      const entry = await shelf.get(uploadId);
      if (entry) return entry;
    }
    return undefined;
  },
  async delete(uploadId) {
    for (const shelf of await shelves()) await shelf.delete(uploadId);
  },
  async all() {
    return (await Promise.all((await shelves()).map((shelf) => shelf.all()))).flat();
  },
};

// Every kept photo, oldest taken first.
export async function waitingEntries() {
  const entries = await kept.all();
  return entries.sort((a, b) => a.takenAt - b.takenAt || a.queuedAt - b.queuedAt);
}

// --- adding a photo -----------------------------------------------------------------------

// 128 random bits as hex. crypto.getRandomValues works on plain HTTP (randomUUID does not).
function newUploadId() {
  const bytes = crypto.getRandomValues(new Uint8Array(16));
  return Array.from(bytes, (b) => b.toString(16).padStart(2, "0")).join("");
}

// When the phone got the photo: the file's own time when it is a plausible one, else now.
function capturedAt(file, now) {
  const stamp = file.lastModified;
  return Number.isFinite(stamp) && stamp > 0 && stamp <= now + 60000 ? stamp : now;
}

// Keep a photo with what goes with it; resolves to the stored entry once it is safely kept.
// `where`: {firingId, firingName} (null id: a plain measurement), `trusted`: the API's
// text fields (reference_c or reference_f, cone, cone_state, magnet, note), `region`,
// `profile`, and `scene` (kiln, steel or other; "" for the firing's) with its words `sceneLabel`.
export async function keepPhoto(file, { firingId = null, firingName = "", trusted = {}, region = "", profile = "",
                                        scene = "", sceneLabel = "" } = {}) {
  const now = Date.now();
  const bytes = await file.arrayBuffer();  // read at once: a camera's file may not stay readable
  const exif = exifTakenAt(bytes);
  const captured = capturedAt(file, now);
  const entry = {
    uploadId: newUploadId(),
    photo: new Blob([bytes], { type: file.type || "image/jpeg" }),
    fileName: file.name || "photo.jpg",
    takenAt: exif ? exif.getTime() : captured,
    takenFrom: exif ? "exif" : "device",
    capturedAt: captured,
    firingId,
    firingName,
    trusted,
    region,
    profile,
    scene,
    sceneLabel,
    queuedAt: now,
    tries: 0,
    problem: "",     // why the last try did not store it
    refused: false,  // the server refused it: not sent again by itself
    fragile: false,  // kept only in this page's memory
  };
  const stored = await kept.put(entry);
  if (navigator.storage && navigator.storage.persist) navigator.storage.persist().catch(() => {});
  changed();
  return stored;
}

export async function discard(uploadId) {
  await kept.delete(uploadId);
  changed();
}

// --- sending ------------------------------------------------------------------------------

function formOf(entry) {
  const form = new FormData();
  form.append("photo", entry.photo, entry.fileName);
  form.append("upload_id", entry.uploadId);
  form.append("captured_at", new Date(entry.capturedAt).toISOString());
  if (entry.region) form.append("region", entry.region);
  if (entry.profile) form.append("profile", entry.profile);
  if (entry.scene) form.append("scene", entry.scene);  // kept before scenes were sent: the server's default
  for (const [name, value] of Object.entries(entry.trusted || {})) if (value !== "") form.append(name, value);
  return form;
}

// POST form data with upload progress (fetch cannot report it); resolves to {status, body}.
export function postForm(url, form, onProgress = () => {}) {
  return new Promise((resolve) => {
    const request = new XMLHttpRequest();
    request.open("POST", url);
    if (FORM_TOKEN) request.setRequestHeader("X-CSRF-Token", FORM_TOKEN);
    request.responseType = "json";
    request.timeout = SEND_TIMEOUT_MS;
    request.upload.onprogress = (e) => { if (e.lengthComputable) onProgress(e.loaded / e.total); };
    request.upload.onload = () => onProgress(1);
    const unreachable = () => resolve({ status: 0, body: null });
    request.onload = () => resolve({ status: request.status, body: request.response });
    request.onerror = unreachable;
    request.ontimeout = unreachable;
    request.onabort = unreachable;
    request.send(form);
  });
}

const UNREACHABLE = "glowtemp could not be reached from this device";

// Send one kept photo. Resolves to {outcome, status, body, entry}, outcome one of
// "stored" (gone from the queue), "later" (kept, tried again by itself), "refused" (kept
// with the server's reason until sent again or discarded) or "busy" (being sent already).
export async function sendKept(uploadId, onProgress) {
  const entry = await kept.get(uploadId);
  if (!entry) return { outcome: "stored", status: 0, body: null, entry: null };  // sent from another tab
  if (inFlight.has(uploadId)) return { outcome: "busy", status: 0, body: null, entry };
  inFlight.add(uploadId);
  try {
    const url = entry.firingId === null ? "/api/readings" : `/api/firings/${entry.firingId}/readings`;
    const { status, body } = await postForm(url, formOf(entry), onProgress);
    if (status === 200 || status === 201) {
      await kept.delete(uploadId);
      changed({ stored: entry, body });
      return { outcome: "stored", status, body, entry };
    }
    const refused = !TRY_LATER.has(status);
    const problem = status === 0 ? UNREACHABLE : (body && body.error) || `the server answered ${status}`;
    const tried = { ...entry, tries: entry.tries + 1, problem, refused };
    if (await kept.get(uploadId)) await kept.put(tried);  // unless discarded meanwhile
    changed();
    return { outcome: refused ? "refused" : "later", status, body, entry: tried };
  } finally {
    inFlight.delete(uploadId);
  }
}

// Send every kept photo that is not refused, oldest taken first, one at a time; stops at the
// first that the server does not answer and tries again after a growing wait.
export async function sendWaiting() {
  clearTimeout(retry.timer);
  retry.timer = null;
  if (retry.running) { retry.again = true; return; }
  retry.running = true;
  let unreachable = false;
  try {
    do {
      retry.again = false;
      unreachable = false;
      for (const entry of await waitingEntries()) {
        if (entry.refused || inFlight.has(entry.uploadId)) continue;
        if ((await sendKept(entry.uploadId)).outcome === "later") { unreachable = true; break; }
      }
    } while (retry.again && !unreachable);
  } finally {
    retry.running = false;
  }
  if (unreachable) {
    retry.timer = setTimeout(sendWaiting, retry.ms * (0.8 + 0.4 * Math.random()));
    retry.ms = Math.min(retry.ms * 2, LONGEST_WAIT_MS);
  } else {
    retry.ms = FIRST_WAIT_MS;
  }
}

// Call `listener(news)` whenever the queue changes; news.stored is an entry just stored, with
// the server's answer in news.body.
export function onQueueChange(listener) {
  listeners.add(listener);
}

function changed(news = {}) {
  for (const listener of listeners) listener(news);
}

// Start sending by itself: now, when online again, when the page is shown again.
export function sendWhenPossible() {
  const soon = () => { retry.ms = FIRST_WAIT_MS; sendWaiting(); };
  window.addEventListener("online", soon);
  document.addEventListener("visibilitychange", () => { if (document.visibilityState === "visible") soon(); });
  sendWaiting();
}
