import { Circle, Marker } from 'react-leaflet';
import { accuracyStyle, positionIcons } from './map-styles';

export type MapPosition = {
  /** [lon, lat]. */
  at: [number, number];
  /** The fix's accuracy radius in metres, as the Geolocation API reports it. */
  accuracyM: number;
  /** `gps`: a device fix, drawn with its accuracy circle; `tap`: a spot chosen on the map. */
  source: 'gps' | 'tap';
};

/** What a screen reader hears for the position, in the map's list and on the marker. */
export function describePosition(position: MapPosition): string {
  return position.source === 'gps' ? `You are here, within ${Math.round(position.accuracyM)} m` : 'Tapped spot';
}

/**
 * "You are here" and, for a device fix, the circle it may be anywhere in. Neither takes a click, so a
 * forager can tap again right beside it.
 */
export default function PositionMarker({ position }: { position: MapPosition }) {
  const center: [number, number] = [position.at[1], position.at[0]];
  return (
    <>
      {position.source === 'gps' && position.accuracyM > 0 && (
        <Circle center={center} radius={position.accuracyM} pathOptions={accuracyStyle} className="tallywood-accuracy" interactive={false} pmIgnore snapIgnore />
      )}
      <Marker position={center} icon={positionIcons[position.source]} title={describePosition(position)} alt={describePosition(position)} interactive={false} keyboard={false} zIndexOffset={1000} pmIgnore snapIgnore />
    </>
  );
}
