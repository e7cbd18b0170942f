/**
 * Open parcels at their rough location only (rough-locations.ts): a dashed square where the
 * parcel's centre lies and a marker in its middle, whose popup names the parcels there and links to
 * asking for access. No boundary is ever drawn: the page never has one. Leaflet touches `window`
 * when imported, so only FindLandMap loads this, in the browser, in a chunk of its own.
 */
import 'leaflet/dist/leaflet.css';
import './map.css';
import type { LeafletEvent, Marker as LeafletMarker } from 'leaflet';
import { useMemo } from 'react';
import { MapContainer, Marker, Popup, Rectangle, TileLayer, Tooltip } from 'react-leaflet';
import { formatArea } from '../../lib/format';
import BaseLayer from './BaseLayer';
import { L } from './leaflet-setup';
import { defaultView, fitMaxZoom } from './map-view';
import { placesBounds, roughPlaces, roughWords, type RoughParcel, type RoughPlace } from './rough-locations';
import { useMapName } from './useMapName';

export type RoughLocationsMapProps = {
  tiles: { url: string; attribution: string; maxZoom: number; baseLayerUrl?: string };
  parcels: RoughParcel[];
  /** The id of the element holding the request form of a parcel, for the popup's link. */
  requestAnchor: (parcelId: string) => string;
  height: string;
};

const cellStyle = { color: '#314f2e', weight: 1.5, dashArray: '5 5', fillColor: '#6f9a66', fillOpacity: 0.12 };

/** A moss disc; with the number of parcels in it when a cell holds more than one. */
const markerIcon = (place: RoughPlace) =>
  L.divIcon({
    className: 'tallywood-rough-marker',
    html: `<span aria-hidden="true" style="display:flex;align-items:center;justify-content:center;width:28px;height:28px;border-radius:9999px;background:#314f2e;color:#fff;border:3px solid #f5f1e6;box-shadow:0 1px 3px rgba(0,0,0,.4);font:600 12px/1 'Work Sans',sans-serif">${place.parcels.length > 1 ? place.parcels.length : ''}</span>`,
    iconSize: [28, 28],
    iconAnchor: [14, 14],
    popupAnchor: [0, -14],
    tooltipAnchor: [0, -16],
  });

/** The name's tooltip would sit on the popup that says the same. */
const closeTooltipOnOpen = { popupopen: (event: LeafletEvent) => (event.target as LeafletMarker).closeTooltip() };

const placeName = (place: RoughPlace) => place.parcels.map((p) => p.name).join(', ');

/** Opens the parcel's "Ask for access" form before the link scrolls to it. */
function openRequestForm(anchorId: string) {
  const details = document.getElementById(anchorId)?.querySelector('details');
  if (details) details.open = true;
}

function Accessible({ label }: { label: string }) {
  useMapName(label);
  return null;
}

/* The popup is kept narrow enough to open beside the zoom buttons on a 390 px phone (autoPanPaddingTopLeft). */
export default function RoughLocationsMap({ tiles, parcels, requestAnchor, height }: RoughLocationsMapProps) {
  const places = useMemo(() => roughPlaces(parcels), [parcels]);
  const box = placesBounds(places);
  const view = box ? { bounds: [[box[0][1], box[0][0]], [box[1][1], box[1][0]]] as [[number, number], [number, number]], boundsOptions: { padding: [16, 16] as [number, number], maxZoom: Math.min(fitMaxZoom, tiles.maxZoom, 14) } } : { center: defaultView.center, zoom: defaultView.zoom };
  const label = `Map of ${parcels.length === 1 ? 'one parcel' : `${parcels.length} parcels`} open to requests, each at its rough location only. Arrow keys pan, plus and minus zoom. The parcels are also listed after the map.`;
  return (
    <div style={{ height }} className="overflow-hidden rounded-lg border border-loam-200 bg-lichen-50">
      <MapContainer style={{ height: '100%', width: '100%' }} maxZoom={tiles.maxZoom} scrollWheelZoom={false} {...view}>
        <TileLayer url={tiles.url} attribution={tiles.attribution} maxZoom={tiles.maxZoom} />
        {tiles.baseLayerUrl && <BaseLayer url={tiles.baseLayerUrl} />}
        {places.map((place) => (
          <Rectangle key={`cell:${place.key}`} bounds={[[place.cell[0][1], place.cell[0][0]], [place.cell[1][1], place.cell[1][0]]]} pathOptions={cellStyle} interactive={false} />
        ))}
        {places.map((place) => (
          <Marker key={place.key} position={[place.at[1], place.at[0]]} icon={markerIcon(place)} title={placeName(place)} alt={placeName(place)} eventHandlers={closeTooltipOnOpen}>
            <Tooltip direction="top">{placeName(place)}</Tooltip>
            <Popup maxWidth={260} autoPanPaddingTopLeft={[48, 8]}>
              <div data-testid="rough-location-popup">
                <p className="!m-0 text-xs text-loam-600">{roughWords(place.at)}: the parcel’s middle is somewhere in the dashed square. Its boundary is shown once you hold a permit.</p>
                <ul className="mt-2 space-y-2">
                  {place.parcels.map((parcel) => (
                    <li key={parcel.id}>
                      <strong>{parcel.name}</strong> <span className="text-xs">· {formatArea(parcel.areaM2)}</span>
                      <br />
                      <a href={`#${requestAnchor(parcel.id)}`} onClick={() => openRequestForm(requestAnchor(parcel.id))}>Ask for access to {parcel.name}</a>
                    </li>
                  ))}
                </ul>
              </div>
            </Popup>
          </Marker>
        ))}
        <Accessible label={label} />
      </MapContainer>
    </div>
  );
}
