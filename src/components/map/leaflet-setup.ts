/**
 * Leaflet with Leaflet-Geoman, ready for our islands. Geoman patches the global `L` that Leaflet
 * sets, so it must load after Leaflet: import Leaflet from this module, never on its own, in map
 * code. Both touch `window` when imported, hence `client:only="react"` for every map island.
 */
import L from 'leaflet';
import '@geoman-io/leaflet-geoman-free';
import iconRetinaUrl from 'leaflet/dist/images/marker-icon-2x.png?url';
import iconUrl from 'leaflet/dist/images/marker-icon.png?url';
import shadowUrl from 'leaflet/dist/images/marker-shadow.png?url';

// Leaflet guesses its marker images' folder from its CSS URL, which a bundler rewrites; point it at
// the bundled files instead (STACK.md, "Leaflet marker icons").
delete (L.Icon.Default.prototype as unknown as { _getIconUrl?: unknown })._getIconUrl;
L.Icon.Default.mergeOptions({ iconRetinaUrl, iconUrl, shadowUrl });

export { L };
