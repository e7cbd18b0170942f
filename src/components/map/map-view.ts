import type { Area, LonLatBounds } from './geometry';
import { boundsOf } from './geometry';

/** Where a map with nothing on it opens: the demo valley. */
export const defaultView = { center: [43.95, -72.85] as [number, number], zoom: 13 };

/** A view in Leaflet's terms ([lat, lon]): a box to fit, or a centre and zoom. */
export type ViewTarget = { bounds: [[number, number], [number, number]] } | { center: [number, number]; zoom: number };

/** Fitting never zooms closer than this, so a small zone still shows its surroundings. */
export const fitMaxZoom = 17;

/**
 * What the map should show: the box the page asked for, or the box around every area (and the
 * geometry being edited), or the default view when there is nothing.
 */
export function viewTargetFor(fitTo: 'features' | LonLatBounds, areas: readonly { geometry: Area | null | undefined }[]): ViewTarget {
  const box = fitTo === 'features' ? boundsOf(areas) : fitTo;
  if (!box) return defaultView;
  const [[west, south], [east, north]] = box;
  return { bounds: [[south, west], [north, east]] };
}

/** A string that changes only when the view target does, so the map refits only then. */
export function viewKey(target: ViewTarget): string {
  const round = (v: number) => Math.round(v * 1e7) / 1e7;
  return 'bounds' in target ? `b:${target.bounds.flat().map(round).join(',')}` : `c:${target.center.map(round).join(',')}@${target.zoom}`;
}
