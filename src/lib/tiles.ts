/**
 * Web Mercator XYZ tiles, per the OpenStreetMap "Slippy map tilenames" convention: at zoom z the
 * world is 2^z × 2^z tiles of 256 px, x counted east from 180°W, y counted south from 85.0511°N.
 * Pure: the local plain tiles (/tiles/{z}/{x}/{y}.svg) are drawn from these numbers alone.
 */

export type Tile = { z: number; x: number; y: number };
export type TileBounds = { west: number; south: number; east: number; north: number };

/** The deepest zoom the local tiles answer; at 22 a tile is about 10 m across at the equator. */
export const maxLocalZoom = 22;
export const tileSize = 256;

export const tileCount = (z: number) => 2 ** z;

/** Tile coordinates are whole numbers inside the zoom's grid. */
export function isValidTile({ z, x, y }: Tile): boolean {
  const n = tileCount(z);
  return [z, x, y].every(Number.isSafeInteger) && z >= 0 && z <= maxLocalZoom && x >= 0 && x < n && y >= 0 && y < n;
}

/** Reads z, x and y from a URL; only plain decimals ("7", never "07", "7.0" or "-1") name a tile. */
export function parseTile(params: { z?: string; x?: string; y?: string }): Tile | null {
  const read = (s: string | undefined) => (s !== undefined && /^(0|[1-9]\d{0,6})$/.test(s) ? Number(s) : NaN);
  const tile = { z: read(params.z), x: read(params.x), y: read(params.y) };
  return isValidTile(tile) ? tile : null;
}

/** Longitude of a (fractional) tile x: lon = x / 2^z × 360 − 180. */
export const tileXToLon = (x: number, z: number) => (x / tileCount(z)) * 360 - 180;

/** Latitude of a (fractional) tile y: lat = atan(sinh(π (1 − 2y / 2^z))). */
export const tileYToLat = (y: number, z: number) => (Math.atan(Math.sinh(Math.PI * (1 - (2 * y) / tileCount(z)))) * 180) / Math.PI;

/** Fractional tile x of a longitude. */
export const lonToTileX = (lon: number, z: number) => ((lon + 180) / 360) * tileCount(z);

/** Fractional tile y of a latitude: (1 − asinh(tan φ) / π) / 2 × 2^z. */
export const latToTileY = (lat: number, z: number) => ((1 - Math.asinh(Math.tan((lat * Math.PI) / 180)) / Math.PI) / 2) * tileCount(z);

/** The [lon, lat] of a tile's north-west corner. */
export function tileToLonLat({ z, x, y }: Tile): [number, number] {
  return [tileXToLon(x, z), tileYToLat(y, z)];
}

/** The tile holding a [lon, lat] position, clamped to the grid (Mercator stops at ±85.0511°). */
export function lonLatToTile([lon, lat]: [number, number], z: number): Tile {
  const last = tileCount(z) - 1;
  const clamp = (v: number) => Math.min(last, Math.max(0, Math.floor(v)));
  return { z, x: clamp(lonToTileX(lon, z)), y: clamp(latToTileY(lat, z)) };
}

export function tileBounds({ z, x, y }: Tile): TileBounds {
  return { west: tileXToLon(x, z), east: tileXToLon(x + 1, z), north: tileYToLat(y, z), south: tileYToLat(y + 1, z) };
}

/** Line spacings, in degrees, that read as round numbers on a label. */
const steps = [90, 45, 30, 15, 10, 5, 2, 1, ...[-1, -2, -3, -4, -5, -6].flatMap((e) => [5, 2, 1].map((m) => Number(`${m}e${e}`)))];

/**
 * Degrees between graticule lines at a zoom: the widest round step that still puts a line across
 * every tile (one to two and a half lines a tile), e.g. 0.02° at zoom 13, 2° at zoom 7. Sparse on
 * purpose: the lines only say the map is flat paper at a scale, they are not the thing to read.
 */
export function graticuleStep(z: number): number {
  const most = 360 / tileCount(z);
  return steps.find((step) => step <= most * (1 + 1e-9)) ?? 1e-6;
}

/** Decimals a label needs to tell lines `step` apart: 0.5 → 1, 0.01 → 2, 2e-5 → 5. */
export const stepDecimals = (step: number) => Math.max(0, Math.ceil(-Math.log10(step) - 1e-9));

/** The multiples of `step` from `min` to `max`, each made as k × step so errors do not add up. */
export function graticuleValues(min: number, max: number, step: number): number[] {
  const values: number[] = [];
  for (let k = Math.ceil(min / step - 1e-9); k * step <= max + step * 1e-9; k += 1) values.push(k * step);
  return values;
}

function formatDegrees(value: number, decimals: number, positive: string, negative: string) {
  const text = Math.abs(value).toFixed(decimals);
  if (Number(text) === 0) return '0°';
  return `${text}°${value > 0 ? positive : negative}`;
}

/** "43.95°N", "12.5°S", "0°". */
export const formatLatitude = (lat: number, decimals: number) => formatDegrees(lat, decimals, 'N', 'S');

/** "72.85°W", "3°E"; the antimeridian reads "180°". */
export const formatLongitude = (lon: number, decimals: number) =>
  Math.abs(Math.abs(lon) - 180) < 1e-9 ? '180°' : formatDegrees(lon, decimals, 'E', 'W');

export type TileSource = {
  url: string;
  attribution: string;
  maxZoom: number;
  /** Named brooks, roads, trails and ridges to draw under the parcels (GeoJSON), when the tiles show no land. */
  baseLayerUrl?: string;
};

/**
 * Our own tiles. `look` names their drawing: they are cached for a year, so a new drawing gets a new
 * value here and browsers fetch it afresh.
 */
export const localTileUrl = '/tiles/{z}/{x}/{y}.svg?look=paper-1';
export const localTileAttribution = 'Tallywood plain map';
/** Most hosted raster tile services stop at zoom 19 (OpenStreetMap's standard layer does, from memory). */
export const defaultRemoteMaxZoom = 19;

/**
 * Why an XYZ template cannot be used, or null when it can: it must be http(s) or a site path and
 * hold {z}, {x} and {y}, which Leaflet fills in.
 */
export function tileTemplateProblem(template: string): string | null {
  if (!/^(https?:\/\/|\/)/.test(template)) return 'must start with https://, http:// or /';
  const missing = ['{z}', '{x}', '{y}'].filter((part) => !template.includes(part));
  return missing.length > 0 ? `must contain ${missing.join(', ')}` : null;
}

/**
 * Where the map's tiles come from: a configured XYZ server, or (unset) our own plain tiles, which
 * need no internet. A configured server without an attribution is credited by its host name; our
 * tiles always carry their own credit, which says they are not a survey map.
 */
export function resolveTileSource(config: { url?: string; attribution?: string; maxZoom?: number }): TileSource {
  const url = config.url?.trim();
  if (!url) return { url: localTileUrl, attribution: localTileAttribution, maxZoom: Math.min(config.maxZoom ?? maxLocalZoom, maxLocalZoom) };
  const problem = tileTemplateProblem(url);
  if (problem) throw new Error(`MAP_TILE_URL ${problem} (like https://tile.example.org/{z}/{x}/{y}.png); it is "${url}".`);
  const host = url.startsWith('/') ? null : url.replace(/^https?:\/\//, '').split('/')[0];
  return { url, attribution: config.attribution ?? (host ? `Map tiles: ${host}` : ''), maxZoom: config.maxZoom ?? defaultRemoteMaxZoom };
}

const palette = {
  paper: '#f5f1e6', // a warm paper, a shade deeper than the page (lichen-50) so the map's edge shows
  line: '#e3d9c7', // between loam-100 and loam-200: seen when looked for, not otherwise
  label: '#a99779', // a faded loam
};

const px = (v: number) => Math.round(v * 10) / 10;

/** Tiles between coordinate labels, across and down: one label in a few screens, not one a tile. */
const labelEvery = 4;

/**
 * Our own 256 × 256 tile: plain paper and a faint graticule whose spacing follows the zoom. It shows
 * no places (the base layer's lines or a real tile server do that) and no tile address. At most one
 * small coordinate label, where a line meets the tile's edge: latitudes on every fourth column of
 * tiles, at the left edge; longitudes on every fourth row, at the top edge, in the other columns.
 */
export function renderTileSvg(tile: Tile): string {
  const { z, x, y } = tile;
  const { west, east, north, south } = tileBounds(tile);
  const step = graticuleStep(z);
  const decimals = stepDecimals(step);
  const lines: string[] = [];
  let label = '';

  const longitudes = graticuleValues(west, east, step).map((lon) => ({ lon, at: px((lonToTileX(lon, z) - x) * tileSize) }));
  const latitudes = graticuleValues(south, north, step)
    .reverse()
    .map((lat) => ({ lat, at: px((latToTileY(lat, z) - y) * tileSize) }));
  for (const { at } of longitudes) lines.push(`M${at} 0V${tileSize}`);
  for (const { at } of latitudes) lines.push(`M0 ${at}H${tileSize}`);

  const roomy = (at: number) => at > 14 && at < tileSize - 14;
  if (x % labelEvery === 0) {
    const first = latitudes.find(({ at }) => roomy(at));
    if (first) label = `<text x="4" y="${px(first.at - 3)}">${formatLatitude(first.lat, decimals)}</text>`;
  } else if (y % labelEvery === 0) {
    const first = longitudes.find(({ at }) => roomy(at) && at < tileSize - 60);
    if (first) label = `<text x="${px(first.at + 3)}" y="11">${formatLongitude(first.lon, decimals)}</text>`;
  }

  return [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${tileSize}" height="${tileSize}" viewBox="0 0 ${tileSize} ${tileSize}">`,
    `<rect width="${tileSize}" height="${tileSize}" fill="${palette.paper}"/>`,
    lines.length > 0 ? `<path d="${lines.join('')}" stroke="${palette.line}" stroke-width="1" fill="none"/>` : '',
    label ? `<g font-family="'Work Sans', system-ui, sans-serif" font-size="9" fill="${palette.label}">${label}</g>` : '',
    '</svg>',
  ].join('');
}
