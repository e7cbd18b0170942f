import { notFound, signedOut } from '../../../lib/errors';
import { endpoint, idParam } from '../../../server/http';
import { loadPhotoForViewer } from '../../../server/photos';

/**
 * A harvest photo: the forager who took it gets the original; the landowner of a parcel, or the
 * active steward of the club whose permit the entry counts under, where one of that forager's
 * entries carries it gets the copy without metadata (no GPS); anyone else, not found
 * (src/db/photos.queries.ts, findPhotoForViewer).
 */
export const GET = endpoint(async ({ locals, params }) => {
  if (!locals.actor) throw signedOut();
  const photo = await loadPhotoForViewer({ uploadId: idParam(params.id, 'Photo'), viewerId: locals.actor.id });
  if (!photo) throw notFound('Photo');
  return new Response(photo.bytes, {
    headers: {
      'content-type': photo.contentType,
      'content-length': String(photo.bytes.byteLength),
      'cache-control': 'private, max-age=3600',
      'x-content-type-options': 'nosniff',
      /** Two viewers of one URL get different bytes. */
      vary: 'cookie',
    },
  });
});
