import { endpoint, guard, json } from '../../../server/http';
import { readPhotoPart } from '../../../server/photo-processing';
import { savePhoto } from '../../../server/photos';

/**
 * A harvest photo, as multipart/form-data with the image in `photo` (JPEG, PNG, WebP or HEIC, up to
 * 10 MB; the type is read from the bytes). Answers the upload's id, to put on a harvest entry, and
 * the GPS position the camera recorded, or null.
 */
export const POST = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const bytes = await readPhotoPart(request);
  const { uploadId, gps } = await savePhoto({ ownerId: actor.id, bytes });
  return json({ uploadId, gps }, 201);
});
