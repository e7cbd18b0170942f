/** The photo types Tallywood accepts, as their registered media types. */
export type PhotoType = 'image/jpeg' | 'image/png' | 'image/webp' | 'image/heic';

/** The file extension each accepted type is stored under. */
export const photoExtensions: Record<PhotoType, string> = {
  'image/jpeg': 'jpg',
  'image/png': 'png',
  'image/webp': 'webp',
  'image/heic': 'heic',
};

const startsWith = (bytes: Uint8Array, signature: readonly number[], at = 0) =>
  bytes.length >= at + signature.length && signature.every((byte, i) => bytes[at + i] === byte);

const ascii = (text: string) => [...text].map((c) => c.charCodeAt(0));

/** JPEG: the SOI marker FF D8 followed by the next marker's FF (ITU-T T.81 | ISO/IEC 10918-1, Annex B.1.1.3 and B.2.1). */
const jpeg = [0xff, 0xd8, 0xff];
/** PNG: the eight-byte signature 137 80 78 71 13 10 26 10 (PNG specification, W3C / ISO/IEC 15948, §5.2). */
const png = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
/** WebP: "RIFF", a four-byte chunk size, then "WEBP" (RFC 9649; the image/webp registration's magic number). */
const riff = ascii('RIFF');
const webp = ascii('WEBP');
/**
 * HEIC: an ISO base media file starts with its FileTypeBox — a four-byte size, "ftyp", then the
 * major brand (ISO/IEC 14496-12 §4.3). HEIF's image brands are "heic" (HEVC coded) and "mif1"
 * (any coding) (ISO/IEC 23008-12; IANA image/heif and image/heic registrations).
 */
const ftyp = ascii('ftyp');
const heifBrands = [ascii('heic'), ascii('mif1')];

/**
 * What the bytes say the file is, whatever its name or declared type claims; null for anything
 * that is not one of the accepted photo formats (text, PDF, GIF, AVIF…).
 */
export function sniffImageType(bytes: Uint8Array): PhotoType | null {
  if (startsWith(bytes, jpeg)) return 'image/jpeg';
  if (startsWith(bytes, png)) return 'image/png';
  if (startsWith(bytes, riff) && startsWith(bytes, webp, 8)) return 'image/webp';
  if (startsWith(bytes, ftyp, 4) && heifBrands.some((brand) => startsWith(bytes, brand, 8))) return 'image/heic';
  return null;
}

/**
 * The EXIF payload (a TIFF structure) of a WebP file's "EXIF" chunk, or null. A WebP file is RIFF
 * chunks after the 12-byte header, each a FourCC, a little-endian 32-bit size and the data padded
 * to an even length (RFC 9649, the RIFF container and the extended format's EXIF chunk). Some
 * writers put JPEG's "Exif\0\0" APP1 identifier before the TIFF header; it is skipped.
 */
export function webpExifPayload(bytes: Uint8Array): Uint8Array | null {
  if (sniffImageType(bytes) !== 'image/webp') return null;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const exif = ascii('EXIF');
  for (let at = 12; at + 8 <= bytes.length; ) {
    const size = view.getUint32(at + 4, true);
    const start = at + 8;
    if (start + size > bytes.length) return null;
    if (startsWith(bytes, exif, at)) {
      const payload = bytes.subarray(start, start + size);
      return startsWith(payload, [...ascii('Exif'), 0, 0]) ? payload.subarray(6) : payload;
    }
    at = start + size + (size % 2);
  }
  return null;
}
