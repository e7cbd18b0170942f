import type { APIRoute } from 'astro';
import { baseFeaturesJson } from '../../server/base-features';
import { endpoint } from '../../server/http';

/**
 * The base layer's lines for maps without a tile server: one small file, the same for everyone.
 * Pages link it with a hash of its content (`mapTiles().baseLayerUrl`), so it may be kept a year.
 */
export const GET: APIRoute = endpoint(async () =>
  new Response(baseFeaturesJson, {
    headers: {
      'content-type': 'application/geo+json; charset=utf-8',
      'cache-control': 'public, max-age=31536000, immutable',
      'x-content-type-options': 'nosniff',
    },
  }),
);
