import { MAP_TILE_ATTRIBUTION, MAP_TILE_MAX_ZOOM, MAP_TILE_URL } from 'astro:env/server';
import { localTileUrl, resolveTileSource, type TileSource } from '../lib/tiles';
import { baseFeaturesUrl } from './base-features';

/**
 * The tiles every map island draws on; pages pass the result as ParcelMap's `tiles` prop. Unset
 * MAP_TILE_URL means our own plain tiles (/tiles/{z}/{x}/{y}.svg), which work with no internet,
 * with the demo valley's brooks, roads, trails and ridges drawn over them (`baseLayerUrl`).
 */
export function mapTiles(): TileSource {
  const source = resolveTileSource({ url: MAP_TILE_URL, attribution: MAP_TILE_ATTRIBUTION, maxZoom: MAP_TILE_MAX_ZOOM });
  return source.url === localTileUrl ? { ...source, baseLayerUrl: baseFeaturesUrl } : source;
}
