/**
 * The "find land" map of My permits: open parcels at their rough location. This island is small and
 * renders on the server; Leaflet and the map (RoughLocationsMap) load only in the browser, in their
 * own chunk, once the island is hydrated — use it with `client:visible`, so a forager who never
 * scrolls to it never downloads them.
 *
 *   <FindLandMap client:visible tiles={mapTiles()} parcels={open.map(({ id, name, centre, areaM2 }) => ({ id, name, centre, areaM2 }))} />
 *
 * Pass only rough locations (`centre` from listOpenParcels): whatever is passed is written into the page.
 */
import { lazy, Suspense, useEffect, useState } from 'react';
import type { RoughParcel } from './rough-locations';

const RoughLocationsMap = lazy(() => import('./RoughLocationsMap'));

export const requestAnchorId = (parcelId: string) => `ask-${parcelId}`;

type Props = { tiles: { url: string; attribution: string; maxZoom: number; baseLayerUrl?: string }; parcels: RoughParcel[]; height?: string };

export default function FindLandMap({ tiles, parcels, height = '20rem' }: Props) {
  const [inBrowser, setInBrowser] = useState(false);
  useEffect(() => setInBrowser(true), []);
  const waiting = (
    <div style={{ height }} className="flex items-center justify-center rounded-lg border border-loam-200 bg-lichen-50 text-sm text-loam-600">
      Loading the map…
    </div>
  );
  return (
    <div className="relative isolate" data-testid="find-land-map">
      {inBrowser ? (
        <Suspense fallback={waiting}>
          <RoughLocationsMap tiles={tiles} parcels={parcels} requestAnchor={requestAnchorId} height={height} />
        </Suspense>
      ) : (
        waiting
      )}
      <p className="mt-1 text-xs text-loam-600">
        Each dashed square is where a parcel’s middle lies, to about a kilometre. Tap a marker for the parcel’s name and to ask for access.
      </p>
    </div>
  );
}
