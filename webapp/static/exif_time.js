// When a JPEG photo was taken: its EXIF DateTimeOriginal, read in the browser before the photo
// is sent (so a photo that waits to be sent still shows its time).
//
// Layout (CIPA DC-008 Exif 2.3, on TIFF 6.0): the APP1 marker segment (0xFFE1) of a JPEG
// (ITU-T T.81 B.1.1) starts with "Exif\0\0" and holds a TIFF header (byte order "II" or "MM",
// the number 42, the offset of IFD0). IFD0's tag 0x8769 points at the Exif IFD, whose tag
// 0x9003 is DateTimeOriginal: 20 ASCII bytes "YYYY:MM:DD HH:MM:SS\0" in the camera's local time.

const TAG_EXIF_IFD = 0x8769;
const TAG_DATE_TIME_ORIGINAL = 0x9003;
const TYPE_ASCII = 2;
const APP1 = 0xe1;
const START_OF_SCAN = 0xda;
const EXIF_TIME = /^(\d{4}):(\d{2}):(\d{2}) (\d{2}):(\d{2}):(\d{2})$/;

// The photo's DateTimeOriginal as a Date in this device's time zone, or null when the bytes
// are not a JPEG, carry no EXIF time, or carry a broken one.
export function exifTakenAt(buffer) {
  try {
    const tiff = exifTiff(new DataView(buffer));
    return tiff ? dateTimeOriginal(tiff) : null;
  } catch (e) {
    if (e instanceof RangeError) return null;  // a length or offset that runs past the end
    throw e;
  }
}

// The TIFF block inside the first Exif APP1 segment, as {view, start, little}; null if none.
function exifTiff(view) {
  if (view.getUint16(0) !== 0xffd8) return null;  // SOI
  let at = 2;
  while (at + 4 <= view.byteLength) {
    if (view.getUint8(at) !== 0xff) return null;
    const marker = view.getUint8(at + 1);
    if (marker === 0xff) { at += 1; continue; }  // fill byte
    if (marker === START_OF_SCAN) return null;   // the picture itself: no metadata after this
    const length = view.getUint16(at + 2);
    if (marker === APP1 && length >= 16 && ascii(view, at + 4, 6) === "Exif\0\0") {
      const start = at + 10;
      const order = ascii(view, start, 2);
      if (order !== "II" && order !== "MM") return null;
      const little = order === "II";
      if (view.getUint16(start + 2, little) !== 42) return null;
      return { view, start, little };
    }
    at += 2 + length;
  }
  return null;
}

function ascii(view, at, count) {
  let text = "";
  for (let i = 0; i < count; i++) text += String.fromCharCode(view.getUint8(at + i));
  return text;
}

// Where the 12-byte entry with `tag` of the IFD at `offset` (from the TIFF start) sits; -1 if absent.
function findEntry(tiff, offset, tag) {
  const { view, start, little } = tiff;
  const entries = view.getUint16(start + offset, little);
  for (let i = 0; i < entries; i++) {
    const at = start + offset + 2 + 12 * i;
    if (view.getUint16(at, little) === tag) return at;
  }
  return -1;
}

function dateTimeOriginal(tiff) {
  const { view, start, little } = tiff;
  const pointer = findEntry(tiff, view.getUint32(start + 4, little), TAG_EXIF_IFD);
  if (pointer < 0) return null;
  const entry = findEntry(tiff, view.getUint32(pointer + 8, little), TAG_DATE_TIME_ORIGINAL);
  if (entry < 0 || view.getUint16(entry + 2, little) !== TYPE_ASCII || view.getUint32(entry + 4, little) < 19) return null;
  const text = ascii(view, start + view.getUint32(entry + 8, little), 19);  // 20 bytes: never inline
  const match = EXIF_TIME.exec(text);
  if (!match) return null;
  const [year, month, day, hour, minute, second] = match.slice(1).map(Number);
  const date = new Date(year, month - 1, day, hour, minute, second);
  const asWritten = date.getFullYear() === year && date.getMonth() === month - 1 && date.getDate() === day &&
    date.getHours() === hour && date.getMinutes() === minute;
  return year >= 1900 && asWritten ? date : null;  // "0000:00:00 00:00:00" and 2024:02:31 are no times
}
