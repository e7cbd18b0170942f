import { createHash } from 'node:crypto';
import text from '../../data/demo/base-features.geojson?raw';

/**
 * The demo valley's brooks, roads, trails and ridge lines (data/demo/base-features.geojson), built
 * into the server. Maps draw them under the parcels when no tile server is configured. The URL
 * carries a hash of the file, so browsers may keep it for a year and still see a changed file.
 */
export const baseFeaturesJson: string = text;
export const baseFeaturesVersion = createHash('sha256').update(text).digest('hex').slice(0, 12);
export const baseFeaturesUrl = `/tiles/base-features.json?v=${baseFeaturesVersion}`;
