import { MAP_TILE_ATTRIBUTION, MAP_TILE_MAX_ZOOM, MAP_TILE_URL } from 'astro:env/server';
import { resolveTileSource, type TileSource } from '../lib/tiles';

/**
 * The tiles every map island draws on; pages pass the result as ParcelMap's `tiles` prop. Unset
 * MAP_TILE_URL means our own grid tiles (/tiles/{z}/{x}/{y}.svg), which work with no internet.
 */
export function mapTiles(): TileSource {
  return resolveTileSource({ url: MAP_TILE_URL, attribution: MAP_TILE_ATTRIBUTION, maxZoom: MAP_TILE_MAX_ZOOM });
}
