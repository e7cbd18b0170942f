import { db } from '../db';
import { findPhotoForViewer, insertPhotoUpload } from '../db/photos.queries';
import { photoExtensions, type PhotoType } from '../lib/photo-bytes';
import { originalPrefixFor, photoPrefixes, processPhoto, sharedKeyFor, sharedTypeFor, type PhotoGps } from './photo-processing';
import type { FileStorage } from './storage';
import { uploadStorage } from './uploads';

/**
 * Stores a forager's harvest photo: the original (GPS and all, for the forager's own record) and a
 * re-encoded copy without metadata (what a landowner sees), then records one `uploads` row.
 * The storage layout is described at `sharedKeyFor` in photo-processing.ts.
 */
export async function savePhoto(
  { ownerId, bytes }: { ownerId: string; bytes: Uint8Array },
  storage: FileStorage = uploadStorage,
): Promise<{ uploadId: string; gps: PhotoGps | null }> {
  const processed = await processPhoto(bytes);
  const shared = await storage.put(processed.shared, {
    prefix: photoPrefixes.shared,
    extension: photoExtensions[processed.sharedContentType],
  });
  let originalKey: string | null = null;
  try {
    const original = await storage.put(bytes, { prefix: originalPrefixFor(shared.key), extension: photoExtensions[processed.contentType] });
    originalKey = original.key;
    const row = await insertPhotoUpload(db, {
      ownerId,
      storageKey: original.key,
      contentType: processed.contentType,
      byteSize: original.byteSize,
      sha256: original.sha256,
      gps: processed.gps,
    });
    return { uploadId: row.id, gps: processed.gps };
  } catch (error) {
    // No row, no files: nothing is left that no record points to.
    await storage.remove(shared.key).catch(() => {});
    if (originalKey) await storage.remove(originalKey).catch(() => {});
    throw error;
  }
}

/** The bytes of a photo as this viewer may see them (see findPhotoForViewer), or null. */
export async function loadPhotoForViewer(
  { uploadId, viewerId }: { uploadId: string; viewerId: string },
  storage: FileStorage = uploadStorage,
): Promise<{ bytes: Uint8Array<ArrayBuffer>; contentType: string } | null> {
  const photo = await findPhotoForViewer(db, { uploadId, viewerId });
  if (!photo) return null;
  if (photo.access === 'original') {
    const bytes = await storage.get(photo.storageKey);
    return bytes ? { bytes: new Uint8Array(bytes), contentType: photo.contentType } : null;
  }
  const key = sharedKeyFor(photo.storageKey, photo.contentType);
  const bytes = key ? await storage.get(key) : null;
  return bytes ? { bytes: new Uint8Array(bytes), contentType: sharedTypeFor(photo.contentType as PhotoType) } : null;
}
