/**
 * The map island: parcels (named on the map), no-harvest zones and previews on our tiles, the land
 * under them (BaseLayer, when the tiles show none), where the forager is (`position`), and (with
 * `editable`) a boundary to draw with Leaflet-Geoman, loaded only then. Leaflet touches `window`
 * when imported, so an Astro page must use `client:only="react"` (`client:load` builds, then the
 * page answers 500):
 *
 *   ---
 *   import ParcelMap from '../components/map/ParcelMap';
 *   import { mapTiles } from '../server/map-config';
 *   const features = parcels.map((p) => ({ id: p.id, name: p.name, geometry: p.boundary, kind: 'parcel' as const, href: `/land/${p.id}` }));
 *   ---
 *   <ParcelMap client:only="react" tiles={mapTiles()} features={features} testId="land-map" />
 *
 * Inside another React island (itself `client:only`), render <ParcelMap … /> like any component;
 * `editable.onChange` can only be passed that way, since an Astro page cannot pass functions.
 */
import 'leaflet/dist/leaflet.css';
import './map.css';
import type { MultiPolygon } from 'geojson';
import type { LeafletMouseEvent, PointTuple } from 'leaflet';
import { lazy, Suspense, useEffect, useId, useMemo, useRef, useState } from 'react';
import './leaflet-setup';
import { MapContainer, Marker, Polygon, TileLayer, Tooltip, useMap, useMapEvents } from 'react-leaflet';
import AreaLabels from './AreaLabels';
import BaseLayer from './BaseLayer';
import type { DrawingOptions } from './DrawingTools';
import PositionMarker, { describePosition, type MapPosition } from './PositionMarker';
import { describeDrawing, layersToMultiPolygon, toLatLngs, type Area, type LonLatBounds } from './geometry';
import { fitMaxZoom, viewKey, viewTargetFor, type ViewTarget } from './map-view';
import { hatchColour, kindWords, markerIcons, pathStyleFor, toneWords, type FeatureKind, type MarkerTone } from './map-styles';
import { useMapName } from './useMapName';

export type MapFeature = {
  id: string;
  /** Shown as the tooltip and in the screen-reader list. */
  name: string;
  /** GeoJSON, positions [lon, lat]. */
  geometry: Area;
  kind?: FeatureKind;
  /** Clicking the area opens this page (not while drawing, where a click places a corner). */
  href?: string;
  /** A word for the tooltip and list, e.g. "listed" or "draft". */
  status?: string;
};

export type MapMarker = { at: [number, number] /* [lon, lat] */; label: string; tone: MarkerTone };
export type { MapPosition };

/** Leaflet-Geoman and its CSS, in a chunk of their own: only maps that draw load them. */
const DrawingTools = lazy(() => import('./DrawingTools'));

export type ParcelMapProps = {
  /**
   * From `mapTiles()` in src/server/map-config.ts: our plain tiles and the demo valley's lines
   * (`baseLayerUrl`) unless MAP_TILE_URL is set.
   */
  tiles: { url: string; attribution: string; maxZoom: number; baseLayerUrl?: string };
  /** Parcels, no-harvest zones (`kind: 'zone'`, hatched), previews and others' land, drawn in this order. */
  features: MapFeature[];
  /** What to show: every feature (and the geometry being edited), or a box [[west, south], [east, north]] in [lon, lat]. */
  fitTo?: 'features' | LonLatBounds;
  /** Drawing mode (Leaflet-Geoman). */
  editable?: DrawingOptions;
  /** Points to call out, e.g. where a boundary crosses itself. */
  markers?: MapMarker[];
  /** Where the forager is: a device fix (with its accuracy circle) or a tapped spot. */
  position?: MapPosition;
  /** CSS height of the map; default 28rem. */
  height?: string;
  testId?: string;
  /** A tap or click on the map (not while drawing) gives its position, [lon, lat]. */
  onPick?: (at: [number, number]) => void;
};

function PickHandler({ onPick }: { onPick: (at: [number, number]) => void }) {
  useMapEvents({ click: (event) => onPick([event.latlng.lng, event.latlng.lat]) });
  return null;
}

/** An area on the map; not editable, but snappable while drawing so a zone can follow a boundary. */
/**
 * On a map that takes a tap for a position, a tap on an area closes its tooltip again: a touch
 * opens it as a hover would, and it would cover the spot just tapped.
 */
function FeatureShape({ feature, hatchId, drawing, picking }: { feature: MapFeature; hatchId: string; drawing: boolean; picking: boolean }) {
  const kind = feature.kind ?? 'parcel';
  const positions = useMemo(() => toLatLngs(feature.geometry), [feature.geometry]);
  const pathOptions = useMemo(() => pathStyleFor(kind, hatchId), [kind, hatchId]);
  const href = drawing ? undefined : feature.href;
  const eventHandlers = useMemo(
    () => (href ? { click: () => window.location.assign(href) } : picking ? { click: (event: LeafletMouseEvent) => event.target.closeTooltip() } : {}),
    [href, picking],
  );
  return (
    <Polygon positions={positions} pathOptions={pathOptions} eventHandlers={eventHandlers} pmIgnore snapIgnore={!drawing}>
      <Tooltip sticky>{describeFeature(feature)}</Tooltip>
    </Polygon>
  );
}

function describeFeature(feature: MapFeature) {
  const kind = kindWords[feature.kind ?? 'parcel'];
  return [feature.name, feature.name.toLowerCase().includes(kind) ? null : kind, feature.status].filter(Boolean).join(' · ');
}

const formatPoint = ([lon, lat]: [number, number]) => `${Math.abs(lat).toFixed(5)}°${lat >= 0 ? 'N' : 'S'}, ${Math.abs(lon).toFixed(5)}°${lon >= 0 ? 'E' : 'W'}`;

/**
 * The map's own behaviour: its accessible name, fitting the view when what it shows changes or
 * when it first gets a size (inside a closed <details>, say), and wheel zoom only once the map is
 * clicked or focused, so scrolling the page does not zoom it.
 */
function MapBehaviour({ target, label, maxZoom }: { target: ViewTarget; label: string; maxZoom: number }) {
  const map = useMap();
  const targetRef = useRef(target);
  targetRef.current = target;
  const key = viewKey(target);
  const shownKey = useRef(key);

  const show = (view: ViewTarget) => {
    if ('bounds' in view) map.fitBounds(view.bounds, { padding: [24, 24], maxZoom: Math.min(fitMaxZoom, maxZoom) });
    else map.setView(view.center, view.zoom);
  };

  useMapName(label);

  useEffect(() => {
    if (shownKey.current === key) return;
    shownKey.current = key;
    show(target);
  });

  useEffect(() => {
    const container = map.getContainer();
    let hadSize = container.clientWidth > 0 && container.clientHeight > 0;
    const observer = new ResizeObserver(() => {
      const hasSize = container.clientWidth > 0 && container.clientHeight > 0;
      map.invalidateSize();
      if (hasSize && !hadSize) show(targetRef.current);
      hadSize = hasSize;
    });
    observer.observe(container);

    map.scrollWheelZoom.disable();
    const wheelOn = () => map.scrollWheelZoom.enable();
    const wheelOff = () => map.scrollWheelZoom.disable();
    map.on('click focus', wheelOn);
    map.on('blur mouseout', wheelOff);
    return () => {
      observer.disconnect();
      map.off('click focus', wheelOn);
      map.off('blur mouseout', wheelOff);
    };
  }, [map]);

  return null;
}

function mapLabel(features: MapFeature[], markers: MapMarker[], drawing: boolean, position: MapPosition | undefined) {
  const areas = features.length === 0 ? 'no areas' : features.length === 1 ? `1 area, ${features[0]?.name}` : `${features.length} areas`;
  const problems = markers.filter((m) => m.tone === 'problem').length;
  const extra = (problems > 0 ? `, ${problems} marked problem${problems === 1 ? '' : 's'}` : '') + (position ? `, ${position.source === 'gps' ? 'your position' : 'a tapped spot'}` : '');
  const help = drawing ? 'Draw with the tools at the top left, by mouse or touch.' : 'Arrow keys pan, plus and minus zoom.';
  return `Map with ${areas}${extra}. ${help} The areas are also listed after the map.`;
}

/** A square `halfM` metres either side of a [lon, lat], near enough for keeping a name clear of it. */
function squareAround([lon, lat]: [number, number], halfM: number): Area {
  const dLat = halfM / 111_320;
  const dLon = dLat / Math.max(0.01, Math.cos((lat * Math.PI) / 180));
  return { type: 'Polygon', coordinates: [[[lon - dLon, lat - dLat], [lon + dLon, lat - dLat], [lon + dLon, lat + dLat], [lon - dLon, lat + dLat], [lon - dLon, lat - dLat]]] };
}

/** Parcels and others' land are named on the map itself; zones and previews by tooltip and list. */
const labelledKinds = new Set<FeatureKind>(['parcel', 'other-owner']);

export default function ParcelMap({ tiles, features, fitTo = 'features', editable, markers = [], position, height = '28rem', testId, onPick }: ParcelMapProps) {
  const uid = useId().replace(/[^a-zA-Z0-9_-]/g, '');
  const hatchId = `tallywood-hatch-${uid}`;
  const listId = `tallywood-map-list-${uid}`;
  // The edited geometry is read once, like a defaultValue: the map owns it from then on.
  const [initial] = useState(() => editable?.initial ?? null);
  const [drawing, setDrawing] = useState<MultiPolygon | null>(() => (initial ? layersToMultiPolygon([initial]) : null));

  const areas = useMemo(() => [...features, ...(initial ? [{ geometry: initial }] : [])], [features, initial]);
  const target = useMemo(() => viewTargetFor(fitTo, areas), [fitTo, areas]);
  const initialView = useRef(target).current;
  const fitOptions = { padding: [24, 24] as PointTuple, maxZoom: Math.min(fitMaxZoom, tiles.maxZoom) };
  const labelled = useMemo(
    () => features.filter((f) => labelledKinds.has(f.kind ?? 'parcel')).map((f) => ({ id: f.id, name: f.name, geometry: f.geometry, kind: f.kind ?? 'parcel' })),
    [features],
  );
  // Names keep clear of no-harvest zones and of where the forager is (the fix's circle, or 30 m).
  const keepClear = useMemo(
    () => [...features.filter((f) => f.kind === 'zone').map((f) => f.geometry), ...(position ? [squareAround(position.at, Math.max(30, position.accuracyM))] : [])],
    [features, position],
  );

  return (
    <div className="relative isolate" data-testid={testId}>
      <svg aria-hidden="true" focusable="false" width="0" height="0" className="absolute">
        <defs>
          <pattern id={hatchId} patternUnits="userSpaceOnUse" width="8" height="8" patternTransform="rotate(45)">
            <rect width="8" height="8" fill={hatchColour} fillOpacity="0.08" />
            <line x1="0" y1="0" x2="0" y2="8" stroke={hatchColour} strokeWidth="2.5" strokeOpacity="0.45" />
          </pattern>
        </defs>
      </svg>
      <div style={{ height }} className="overflow-hidden rounded-lg border border-loam-200 bg-lichen-50">
        <MapContainer
          style={{ height: '100%', width: '100%' }}
          maxZoom={tiles.maxZoom}
          {...('bounds' in initialView ? { bounds: initialView.bounds, boundsOptions: fitOptions } : { center: initialView.center, zoom: initialView.zoom })}
        >
          <TileLayer url={tiles.url} attribution={tiles.attribution} maxZoom={tiles.maxZoom} />
          {tiles.baseLayerUrl && <BaseLayer url={tiles.baseLayerUrl} />}
          {features.map((feature) => (
            <FeatureShape key={feature.id} feature={feature} hatchId={hatchId} drawing={!!editable} picking={!!onPick && !editable} />
          ))}
          <AreaLabels areas={labelled} avoid={keepClear} />
          {position && <PositionMarker position={position} />}
          {markers.map((marker, i) => (
            <Marker
              key={`${i}:${marker.at.join(',')}`}
              position={[marker.at[1], marker.at[0]]}
              icon={markerIcons[marker.tone]}
              title={`${toneWords[marker.tone]}: ${marker.label}`}
              pmIgnore
              snapIgnore
            >
              <Tooltip direction="top">{marker.label}</Tooltip>
            </Marker>
          ))}
          {editable && (
            <Suspense fallback={null}>
              <DrawingTools options={editable} onDrawing={setDrawing} />
            </Suspense>
          )}
          {onPick && !editable && <PickHandler onPick={onPick} />}
          <MapBehaviour target={target} label={mapLabel(features, markers, !!editable, position)} maxZoom={tiles.maxZoom} />
        </MapContainer>
      </div>

      <div className="sr-only text-sm focus-within:not-sr-only focus-within:mt-2 focus-within:block focus-within:rounded-md focus-within:border focus-within:border-loam-200 focus-within:bg-white focus-within:p-3">
        <p id={listId} className="font-semibold">Areas on this map</p>
        {features.length === 0 ? (
          <p>None.</p>
        ) : (
          <ul aria-labelledby={listId}>
            {features.map((feature) => (
              <li key={feature.id}>{feature.href && !editable ? <a href={feature.href}>{describeFeature(feature)}</a> : describeFeature(feature)}</li>
            ))}
          </ul>
        )}
        {position && (
          <>
            <p className="font-semibold">Your position</p>
            <p>{describePosition(position)} (at {formatPoint(position.at)})</p>
          </>
        )}
        {markers.length > 0 && (
          <>
            <p className="font-semibold">Marked points</p>
            <ul>
              {markers.map((marker, i) => (
                <li key={`${i}:${marker.at.join(',')}`}>{toneWords[marker.tone]}: {marker.label} (at {formatPoint(marker.at)})</li>
              ))}
            </ul>
          </>
        )}
        {editable && <p aria-live="polite">{describeDrawing(drawing)}</p>}
      </div>
    </div>
  );
}
