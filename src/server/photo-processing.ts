import exifr from 'exifr';
import sharp from 'sharp';
import { AppError, invalidInput } from '../lib/errors';
import { photoExtensions, sniffImageType, webpExifPayload, type PhotoType } from '../lib/photo-bytes';
import { readCapped } from './request-body';

/** A harvest photo larger than this is refused: a phone's full-size JPEG is 2–6 MB. */
export const maxPhotoBytes = 10 * 1024 * 1024;

export type PhotoGps = { longitude: number; latitude: number };

/** The type of the copy a landowner sees: WebP stays WebP, everything else becomes JPEG. */
export type SharedPhotoType = 'image/jpeg' | 'image/webp';

export type ProcessedPhoto = {
  /** The original's type, from its bytes. */
  contentType: PhotoType;
  /** Where the camera says it was taken (EXIF GPS IFD), or null when it does not say. */
  gps: PhotoGps | null;
  /** The pixels re-encoded, upright, with no metadata at all (no EXIF, GPS, XMP or maker notes). */
  shared: Buffer;
  sharedContentType: SharedPhotoType;
};

/**
 * The most pixels a photo may declare: a 48-megapixel phone camera's full size (8064 × 6048) fits.
 * A small file can declare a far larger image (a "decompression bomb"); its header is read first and
 * the photo refused before any pixel is decoded, and sharp is held to the same limit while decoding.
 */
export const maxPhotoPixels = 50_000_000;

const tooManyPixels = (width: number, height: number) =>
  new AppError(
    413,
    'photo-too-large',
    `That photo is ${width} × ${height} pixels (${Math.round((width * height) / 1e6)} megapixels); Tallywood takes up to ${maxPhotoPixels / 1e6} megapixels. Share a reduced size.`,
    'photo',
  );

export const photoTooLarge = () =>
  new AppError(413, 'file-too-large', `That photo is larger than ${maxPhotoBytes / 1024 / 1024} MB. Send a smaller one (most phones can share a reduced size).`, 'photo');

const unsupportedType = () =>
  new AppError(415, 'unsupported-media-type', 'That file is not a photo Tallywood can take: send a JPEG, PNG, WebP or HEIC image.', 'photo');

const unreadableHeic = () =>
  new AppError(
    415,
    'unsupported-media-type',
    'This server cannot read that HEIC photo. Send it as JPEG instead (on an iPhone: Settings → Camera → Formats → Most Compatible, or share the photo as JPEG).',
    'photo',
  );

const unreadable = () => new AppError(400, 'invalid-input', 'That photo could not be read; the file may be damaged. Take or export it again.', 'photo');

/** Room for the multipart boundaries and part headers around the photo itself. */
const multipartOverheadBytes = 64 * 1024;
const maxBodyBytes = maxPhotoBytes + multipartOverheadBytes;

/**
 * The `photo` part of a multipart body. A body whose content-length is over the cap is refused
 * before a byte is read; one without a trustworthy length is read only up to the cap, then refused.
 */
export async function readPhotoPart(request: Request): Promise<Uint8Array> {
  const type = request.headers.get('content-type') ?? '';
  if (!type.startsWith('multipart/form-data')) throw new AppError(415, 'unsupported-media-type', 'Send the photo as multipart/form-data in a field named "photo".', 'photo');
  const body = await readCapped(request, maxBodyBytes, photoTooLarge);
  const form = await new Response(body, { headers: { 'content-type': type } }).formData().catch(() => null);
  const file = form?.get('photo');
  if (!(file instanceof File)) throw invalidInput('photo', 'Choose a photo to upload (a field named "photo").');
  if (file.size > maxPhotoBytes) throw photoTooLarge();
  if (file.size === 0) throw invalidInput('photo', 'That photo is empty.');
  return new Uint8Array(await file.arrayBuffer());
}

/**
 * Checks a photo's type from its bytes, reads its GPS position and makes the copy others may see.
 * Needs no database, storage or Astro environment, so tests call it directly. Throws 413/415/400
 * AppErrors a person can act on.
 */
export async function processPhoto(bytes: Uint8Array): Promise<ProcessedPhoto> {
  if (bytes.byteLength > maxPhotoBytes) throw photoTooLarge();
  const contentType = sniffImageType(bytes);
  if (!contentType) throw unsupportedType();
  const buffer = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  // exifr 7 reads JPEG, PNG, HEIC and TIFF but not WebP: for WebP it is handed the EXIF chunk's TIFF bytes.
  const exifSource = contentType === 'image/webp' ? webpExifPayload(bytes) : buffer;
  const gps = exifSource ? await readGps(Buffer.from(exifSource.buffer, exifSource.byteOffset, exifSource.byteLength)) : null;
  const sharedContentType: SharedPhotoType = sharedTypeFor(contentType);
  const size = await sharp(buffer, { limitInputPixels: false }).metadata().catch(() => null);
  if (size?.width && size.height && size.width * size.height > maxPhotoPixels) throw tooManyPixels(size.width, size.height);
  let shared: Buffer;
  try {
    // rotate() with no angle applies the EXIF orientation, so the copy stands upright without it.
    // No withMetadata/keepMetadata/withExif: sharp writes none of the input's metadata.
    const image = sharp(buffer, { failOn: 'error', limitInputPixels: maxPhotoPixels }).rotate();
    shared =
      sharedContentType === 'image/webp'
        ? await image.webp({ quality: 85 }).toBuffer()
        : await image.flatten({ background: '#ffffff' }).jpeg({ quality: 85 }).toBuffer();
  } catch {
    // Sharp's prebuilt libvips decodes AVIF-coded HEIF only; HEVC-coded HEIC needs a libvips built with libde265.
    throw contentType === 'image/heic' ? unreadableHeic() : unreadable();
  }
  return { contentType, gps, shared, sharedContentType };
}

export function sharedTypeFor(contentType: PhotoType): SharedPhotoType {
  return contentType === 'image/webp' ? 'image/webp' : 'image/jpeg';
}

/** The position in the EXIF GPS IFD as decimal degrees (exifr applies the N/S and E/W references). */
async function readGps(buffer: Buffer): Promise<PhotoGps | null> {
  let found: { latitude?: unknown; longitude?: unknown } | undefined;
  try {
    found = await exifr.gps(buffer);
  } catch {
    return null; // metadata exifr cannot parse is metadata we do not have
  }
  const latitude = found?.latitude;
  const longitude = found?.longitude;
  if (typeof latitude !== 'number' || typeof longitude !== 'number') return null;
  if (!Number.isFinite(latitude) || !Number.isFinite(longitude) || Math.abs(latitude) > 90 || Math.abs(longitude) > 180) return null;
  return { longitude, latitude };
}

/**
 * Where the two copies live. The `uploads` row keeps only the original's key; the shared copy's key
 * is derived from it, so no column is needed:
 *   shared:   photos/shared/<uuid>.<jpg|webp>
 *   original: photos/original/<uuid>/<uuid2>.<ext>
 * The shared copy is stored first (the storage picks <uuid>), then the original under a prefix
 * naming that uuid.
 */
export const photoPrefixes = { original: 'photos/original', shared: 'photos/shared' } as const;

export function originalPrefixFor(sharedKey: string): string {
  const id = photoIdOf(sharedKey, photoPrefixes.shared);
  if (!id) throw new Error(`not a shared photo key: ${sharedKey}`);
  return `${photoPrefixes.original}/${id}`;
}

/** The shared copy's storage key for an original's key and type; null for a key not laid out as above. */
export function sharedKeyFor(originalKey: string, contentType: string): string | null {
  const type = contentType as PhotoType;
  if (!(type in photoExtensions)) return null;
  const id = photoIdOf(originalKey, photoPrefixes.original);
  return id ? `${photoPrefixes.shared}/${id}.${photoExtensions[sharedTypeFor(type)]}` : null;
}

const uuidPart = '[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}';

function photoIdOf(key: string, prefix: string): string {
  const normalised = key.replaceAll('\\', '/');
  const match = new RegExp(`^${prefix}/(${uuidPart})(?:/|\\.)`, 'i').exec(normalised);
  return match?.[1] ?? '';
}
