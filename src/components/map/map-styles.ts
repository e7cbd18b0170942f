import type { DivIcon, PathOptions } from 'leaflet';
import { L } from './leaflet-setup';

/**
 * How each kind of area looks, in the palette of tailwind.config.ts. Colour is never the only
 * signal: parcels have a solid outline, no-harvest zones a dashed outline over hatching, previews
 * a long dash and other owners' land a thin grey line.
 */
export type FeatureKind = 'parcel' | 'zone' | 'preview' | 'other-owner';

export const kindWords: Record<FeatureKind, string> = {
  parcel: 'parcel',
  zone: 'no-harvest zone',
  preview: 'preview, not saved',
  'other-owner': "another landowner's parcel",
};

const colour = {
  moss400: '#6f9a66',
  moss700: '#314f2e',
  loam200: '#dccdb9',
  loam700: '#5c4431',
  loam800: '#4a372a',
  lichen200: '#e8e8c4',
  ember500: '#c75b1b',
  ember600: '#a8481a',
  grey: '#6b6b66',
};

/** The colour of the hatching ParcelMap draws into an SVG <pattern> that zones are filled with. */
export const hatchColour = colour.ember500;

export function pathStyleFor(kind: FeatureKind, hatchId: string): PathOptions {
  switch (kind) {
    case 'zone':
      // Leaflet writes fillColor into the path's fill attribute, so a pattern reference works there.
      return { color: colour.ember600, weight: 2, dashArray: '6 4', fillColor: `url(#${hatchId})`, fillOpacity: 1 };
    case 'preview':
      return { color: colour.loam700, weight: 2.5, dashArray: '12 6', fillColor: colour.lichen200, fillOpacity: 0.4 };
    case 'other-owner':
      return { color: colour.grey, weight: 1, fillColor: colour.grey, fillOpacity: 0.06 };
    case 'parcel':
    default:
      return { color: colour.moss700, weight: 2.5, fillColor: colour.moss400, fillOpacity: 0.2 };
  }
}

/** The boundary being drawn or edited: heavier than any shown area and brown, not green, so it reads as "yours". */
export const drawnStyle: PathOptions = { color: colour.loam800, weight: 3.5, fillColor: colour.loam200, fillOpacity: 0.45 };
export const drawingLineStyle: PathOptions = { color: colour.loam800, weight: 2, dashArray: '4 4' };

export type MarkerTone = 'problem' | 'info';
export const toneWords: Record<MarkerTone, string> = { problem: 'Problem', info: 'Note' };

/** A diamond with "!" for a problem, a circle with "i" for a note: the shape says it before the colour. */
export const markerIcons: Record<MarkerTone, DivIcon> = {
  problem: L.divIcon({
    className: '',
    html: '<span class="flex h-5 w-5 rotate-45 items-center justify-center border-2 border-white bg-ember-600 shadow"><span class="-rotate-45 text-xs font-bold leading-none text-white" aria-hidden="true">!</span></span>',
    iconSize: [20, 20],
    iconAnchor: [10, 10],
    tooltipAnchor: [0, -12],
  }),
  info: L.divIcon({
    className: '',
    html: '<span class="flex h-5 w-5 items-center justify-center rounded-full border-2 border-white bg-moss-700 shadow"><span class="font-serif text-xs font-bold italic leading-none text-white" aria-hidden="true">i</span></span>',
    iconSize: [20, 20],
    iconAnchor: [10, 10],
    tooltipAnchor: [0, -12],
  }),
};
