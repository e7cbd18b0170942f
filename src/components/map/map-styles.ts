import type { Icon, PathOptions } from 'leaflet';
import type { BaseKind } from './base-layer';
import noteIconUrl from './icons/note.svg?url';
import problemIconUrl from './icons/problem.svg?url';
import tappedSpotIconUrl from './icons/tapped-spot.svg?url';
import youAreHereIconUrl from './icons/you-are-here.svg?url';
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
  loam500: '#8d6a49',
  paper: '#f5f1e6',
  brook: '#3f7fb0',
  brookText: '#2c5f88',
  road: '#8f8d86',
  roadText: '#55534e',
  ridge: '#3b352e',
  plum: '#7b3f98',
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

/**
 * A diamond with "!" for a problem, a round note with lines of text for a note: the shape says it
 * before the colour. SVG files shipped with the app, at a fixed size.
 */
export const markerIcons: Record<MarkerTone, Icon> = {
  problem: L.icon({ iconUrl: problemIconUrl, iconSize: [22, 22], iconAnchor: [11, 11], tooltipAnchor: [0, -12] }),
  info: L.icon({ iconUrl: noteIconUrl, iconSize: [22, 22], iconAnchor: [11, 11], tooltipAnchor: [0, -12] }),
};

/**
 * "You are here": a plum disc with a white centre in a white ring for a position fix, a ringed
 * cross-hair for a tapped spot. Plum is on no parcel, zone or base line, so the fix and its accuracy
 * circle never read as land.
 */
export const positionColour = colour.plum;
export const positionIcons: Record<'gps' | 'tap', Icon> = {
  gps: L.icon({ iconUrl: youAreHereIconUrl, iconSize: [24, 24], iconAnchor: [12, 12], className: 'tallywood-position', tooltipAnchor: [0, -13] }),
  tap: L.icon({ iconUrl: tappedSpotIconUrl, iconSize: [28, 28], iconAnchor: [14, 14], className: 'tallywood-position', tooltipAnchor: [0, -15] }),
};
export const accuracyStyle: PathOptions = { color: colour.plum, weight: 1.5, opacity: 0.8, fillColor: colour.plum, fillOpacity: 0.14 };

/**
 * The base layer's lines, from data/demo/base-features.geojson: a brook is blue, a road grey on a
 * pale casing, a trail dashed brown, a ridge a dotted dark line. Kinds differ by dash as well as colour.
 */
export const baseLineStyles: Record<BaseKind, PathOptions[]> = {
  brook: [{ color: colour.brook, weight: 2.5, opacity: 0.9, lineCap: 'round', lineJoin: 'round' }],
  road: [
    { color: colour.paper, weight: 6, opacity: 0.95, lineCap: 'round', lineJoin: 'round' },
    { color: colour.road, weight: 3.5, opacity: 0.85, lineCap: 'round', lineJoin: 'round' },
  ],
  trail: [{ color: colour.loam500, weight: 1.75, dashArray: '5 4', opacity: 0.95 }],
  ridge: [{ color: colour.ridge, weight: 2, dashArray: '0.5 5', lineCap: 'round', opacity: 0.8 }],
};

/** The colour a base line's name is written in, and the lowest zoom it is written at. */
export const baseLabelStyles: Record<BaseKind, { fill: string; minZoom: number; italic: boolean }> = {
  brook: { fill: colour.brookText, minZoom: 14, italic: true },
  road: { fill: colour.roadText, minZoom: 14, italic: false },
  trail: { fill: colour.loam700, minZoom: 15, italic: false },
  ridge: { fill: colour.ridge, minZoom: 14, italic: false },
};
