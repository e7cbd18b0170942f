import { useMemo, useState } from 'react';
import { Marker, useMap, useMapEvents } from 'react-leaflet';
import { boundsOf, type Area } from './geometry';
import { chooseLabels, clipToBox, labelPointOf, labelSize, type LabelCandidate } from './labels';
import { L } from './leaflet-setup';
import type { FeatureKind } from './map-styles';

/** Over the areas (overlay pane, 400), under markers (600); lets every click through to the area below. */
const labelPane = 'tallywood-labels';

const escapeHtml = (text: string) => text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

const tone: Partial<Record<FeatureKind, string>> = {
  parcel: 'text-moss-900',
  'other-owner': 'text-loam-700 font-medium',
  zone: 'text-ember-700 italic',
};

/** A name centred on its point; on two lines it is held to the width labels.ts measured for it. */
function labelIcon(text: string, kind: FeatureKind, lines: 1 | 2, width: number) {
  const wrap = lines === 1 ? 'whitespace-nowrap' : 'text-center leading-4';
  const style = lines === 1 ? '' : ` style="width:${width}px"`;
  return L.divIcon({
    className: '',
    iconSize: [0, 0],
    html: `<span class="tallywood-area-label pointer-events-none absolute left-0 top-0 block -translate-x-1/2 -translate-y-1/2 text-xs font-semibold [text-shadow:0_0_3px_#f5f1e6,0_0_2px_#f5f1e6,0_0_1px_#f5f1e6] ${wrap} ${tone[kind] ?? 'text-moss-900'}"${style}>${escapeHtml(text)}</span>`,
  });
}

/**
 * Each parcel's name written on the map at a point well inside it, shown only at zooms where the
 * parcel is big enough on screen to hold it and it clears the names already placed (labels.ts).
 */
export default function AreaLabels({ areas, avoid }: { areas: { id: string; name: string; geometry: Area; kind: FeatureKind }[]; avoid: Area[] }) {
  const map = useMap();
  if (!map.getPane(labelPane)) {
    const pane = map.createPane(labelPane);
    pane.style.zIndex = '450';
    pane.style.pointerEvents = 'none';
  }
  const viewOf = () => {
    const { min, max } = map.getPixelBounds();
    const bounds = map.getBounds();
    return {
      zoom: map.getZoom(),
      box: { left: min?.x ?? 0, top: min?.y ?? 0, right: max?.x ?? 0, bottom: max?.y ?? 0 },
      lonLat: [[bounds.getWest(), bounds.getSouth()], [bounds.getEast(), bounds.getNorth()]] as [[number, number], [number, number]],
    };
  };
  const [view, setView] = useState(viewOf);
  // moveend follows every zoom and pan, and a resize (Leaflet fires it from invalidateSize).
  useMapEvents({ moveend: () => setView(viewOf()) });

  const candidates = useMemo(
    () =>
      areas.map((area): LabelCandidate & { kind: FeatureKind; geometry: Area } => ({
        id: area.id,
        text: area.name,
        kind: area.kind,
        geometry: area.geometry,
        at: labelPointOf(area.geometry, avoid),
        bounds: boundsOf([area]) ?? [[0, 0], [0, 0]],
      })),
    [areas, avoid],
  );
  // A parcel whose usual label point is out of view, or too near its edge for the name (a forager
  // zoomed in inside it), is named where it is seen: at the label point of its part inside the view,
  // less half a name's width and height at each edge, sized by that part.
  const inView = useMemo(() => {
    const [[west, south], [east, north]] = view.lonLat;
    const lonPerPx = (east - west) / Math.max(1, view.box.right - view.box.left);
    const latPerPx = (north - south) / Math.max(1, view.box.bottom - view.box.top);
    return candidates.map((candidate) => {
      // The narrower layout (two lines, when the name has a space): chooseLabels takes one line where it fits.
      const size = labelSize(candidate.text, 2);
      const room: [[number, number], [number, number]] = [
        [west + (size.width / 2) * lonPerPx, south + size.height * latPerPx],
        [east - (size.width / 2) * lonPerPx, north - size.height * latPerPx],
      ];
      const [lon, lat] = candidate.at;
      if (room[0][0] >= room[1][0] || (lon > room[0][0] && lon < room[1][0] && lat > room[0][1] && lat < room[1][1])) return candidate;
      const seen = clipToBox(candidate.geometry, room);
      return seen ? { ...candidate, at: labelPointOf(seen, avoid), bounds: boundsOf([{ geometry: seen }]) ?? candidate.bounds } : candidate;
    });
  }, [candidates, view, avoid]);

  // One icon per name and layout, kept while the areas stay the same, so panning moves no DOM.
  const icons = useMemo(() => new Map<string, L.DivIcon>(), [candidates]);
  const shown = useMemo(
    () =>
      chooseLabels(inView, view.zoom, view.box).map((label) => {
        const key = `${label.id}:${label.lines}`;
        let icon = icons.get(key);
        if (!icon) icons.set(key, (icon = labelIcon(label.text, label.kind, label.lines, label.width)));
        return { ...label, key, icon };
      }),
    [inView, icons, view],
  );

  return shown.map((label) => (
    <Marker
      key={label.key}
      position={[label.at[1], label.at[0]]}
      icon={label.icon}
      pane={labelPane}
      interactive={false}
      keyboard={false}
      pmIgnore
      snapIgnore
    />
  ));
}
