import { MAP_TILE_ATTRIBUTION, MAP_TILE_MAX_ZOOM, MAP_TILE_URL, TALLYWOOD_LOCAL_MODE } from 'astro:env/server';
import { localTileUrl, resolveTileSource, type TileSource } from '../lib/tiles';
import { baseFeaturesUrl } from './base-features';

/**
 * The tiles every map island draws on; pages pass the result as ParcelMap's `tiles` prop. Unset
 * MAP_TILE_URL means our own plain tiles (/tiles/{z}/{x}/{y}.svg), which work with no internet,
 * with the demo valley's brooks, roads, trails and ridges drawn over them (`baseLayerUrl`) in local
 * mode only: the valley is invented, and a real deployment's land is not in it.
 */
export function mapTiles(): TileSource {
  const source = resolveTileSource({ url: MAP_TILE_URL, attribution: MAP_TILE_ATTRIBUTION, maxZoom: MAP_TILE_MAX_ZOOM });
  return source.url === localTileUrl && TALLYWOOD_LOCAL_MODE ? { ...source, baseLayerUrl: baseFeaturesUrl } : source;
}
