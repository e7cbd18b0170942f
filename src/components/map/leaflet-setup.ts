/**
 * Leaflet, ready for our islands: import it from this module, never on its own, in map code. It
 * touches `window` when imported, hence `client:only="react"` for every map island. Leaflet-Geoman
 * is not here: DrawingTools loads it, in its own chunk, only on maps that draw.
 */
import L from 'leaflet';
import iconRetinaUrl from 'leaflet/dist/images/marker-icon-2x.png?url';
import iconUrl from 'leaflet/dist/images/marker-icon.png?url';
import shadowUrl from 'leaflet/dist/images/marker-shadow.png?url';

// Leaflet guesses its marker images' folder from its CSS URL, which a bundler rewrites; point it at
// the bundled files instead (STACK.md, "Leaflet marker icons").
delete (L.Icon.Default.prototype as unknown as { _getIconUrl?: unknown })._getIconUrl;
L.Icon.Default.mergeOptions({ iconRetinaUrl, iconUrl, shadowUrl });

export { L };
