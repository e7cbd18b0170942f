import type { APIRoute } from 'astro';
import { AppError } from '../../../../lib/errors';
import { maxLocalZoom, parseTile, renderTileSvg } from '../../../../lib/tiles';
import { endpoint } from '../../../../server/http';

/**
 * The local plain tiles, drawn per request from z/x/y alone: no files, no database, no internet.
 * A tile never changes for its address (a new drawing gets a new `look` in the URL, see
 * `localTileUrl`), so browsers and proxies may keep it for a year.
 */
export const GET: APIRoute = endpoint(async ({ params }) => {
  const tile = parseTile(params);
  if (!tile) {
    throw new AppError(404, 'not-found', `There is no tile ${params.z}/${params.x}/${params.y}: zoom runs from 0 to ${maxLocalZoom}, and x and y from 0 to 2^zoom − 1.`);
  }
  return new Response(renderTileSvg(tile), {
    headers: {
      'content-type': 'image/svg+xml; charset=utf-8',
      'cache-control': 'public, max-age=31536000, immutable',
      'x-content-type-options': 'nosniff',
    },
  });
});
