/**
 * Leaflet-Geoman patches the global `L` that Leaflet sets, so it is imported after leaflet-setup.
 * ParcelMap loads this module lazily, only when a map is `editable`: the plugin and its CSS stay out
 * of every other map's chunk.
 */
import '@geoman-io/leaflet-geoman-free/dist/leaflet-geoman.css';
import type { MultiPolygon } from 'geojson';
import { useEffect, useRef } from 'react';
import { useMap } from 'react-leaflet';
import { layersToMultiPolygon, splitParts, toLatLngs, type Area } from './geometry';
import { L } from './leaflet-setup';
import '@geoman-io/leaflet-geoman-free';
import { drawingLineStyle, drawnStyle } from './map-styles';

export type DrawingOptions = {
  /** The geometry being edited, read once when the map mounts (like an input's defaultValue). */
  initial?: Area | null;
  /** Adds Geoman's cut tool, which cuts holes. */
  allowHoles?: boolean;
  /** Several polygons make one MultiPolygon; without it a new polygon replaces the old one. */
  allowMultipleParts?: boolean;
  /** After every draw, edit, drag, cut or removal: all drawn areas as one MultiPolygon, or null. */
  onChange: (geometry: MultiPolygon | null) => void;
};

/** Geoman's toolbar, cut down to what a boundary needs. */
function toolbar(allowHoles: boolean): L.PM.ToolbarOptions {
  return {
    position: 'topleft',
    drawPolygon: true,
    drawMarker: false,
    drawCircleMarker: false,
    drawPolyline: false,
    drawRectangle: false,
    drawCircle: false,
    drawText: false,
    editMode: true,
    dragMode: true,
    cutPolygon: allowHoles,
    removalMode: true,
    rotateMode: false,
  };
}

/** Plain words on Geoman's buttons and hints (its English defaults name shapes, not land). */
const words: L.PM.Translations = {
  tooltips: { firstVertex: 'Click to place the first corner', continueLine: 'Click to place the next corner', finishPoly: 'Click the first corner to close the area' },
  buttonTitles: { drawPolyButton: 'Draw an area', editButton: 'Move corners', dragButton: 'Move a whole area', cutButton: 'Cut a hole', deleteButton: 'Remove an area' },
};

/**
 * Drawing with Leaflet-Geoman. Drawn areas live in one FeatureGroup (Geoman's `layerGroup`), so the
 * answer is always "what is in the group now", whatever tool changed it. Areas shown by ParcelMap
 * carry `pmIgnore`, so no tool can edit, cut or remove them; they stay snappable.
 */
export default function DrawingTools({ options, onDrawing }: { options: DrawingOptions; onDrawing: (geometry: MultiPolygon | null) => void }) {
  const map = useMap();
  const latest = useRef({ options, onDrawing });
  latest.current = { options, onDrawing };
  const allowHoles = options.allowHoles ?? false;

  useEffect(() => {
    // A map made before this chunk arrived missed Geoman's init hook; give it its `pm` now.
    if (!map.pm) L.PM.reInitLayer(map as unknown as L.Layer);
    const drawn = L.featureGroup().addTo(map);
    for (const part of splitParts(latest.current.options.initial ?? { type: 'MultiPolygon', coordinates: [] })) {
      L.polygon(toLatLngs(part), drawnStyle).addTo(drawn);
    }
    map.pm.setLang('en', words, 'en');
    map.pm.setGlobalOptions({
      layerGroup: drawn,
      pathOptions: drawnStyle,
      templineStyle: drawingLineStyle,
      hintlineStyle: { ...drawingLineStyle, dashArray: '2 6' },
      snappable: true,
      snapDistance: 15,
      finishOnEnter: true,
      exitModeOnEscape: true,
    });

    // One tool can fire several events for one change (a cut fires pm:cut, then pm:edit on the old
    // layer): answer once, after they have all run.
    let scheduled = false;
    let active = true;
    const report = () => {
      if (scheduled) return;
      scheduled = true;
      queueMicrotask(() => {
        scheduled = false;
        if (!active) return;
        const geometry = layersToMultiPolygon(drawn.toGeoJSON(7));
        latest.current.onDrawing(geometry);
        latest.current.options.onChange(geometry);
      });
    };

    const onCreate = (event: { layer: L.Layer }) => {
      if (!latest.current.options.allowMultipleParts) {
        for (const layer of drawn.getLayers()) if (layer !== event.layer) drawn.removeLayer(layer);
      }
      if (!drawn.hasLayer(event.layer)) drawn.addLayer(event.layer);
      report();
    };
    // Geoman's cut swaps the cut layer for a new one; make sure the swap happened inside our group.
    const onCut = (event: { layer: L.Layer; originalLayer: L.Layer }) => {
      if (drawn.hasLayer(event.originalLayer)) drawn.removeLayer(event.originalLayer);
      if (!drawn.hasLayer(event.layer)) {
        event.layer.remove();
        drawn.addLayer(event.layer);
      }
      report();
    };

    map.on('pm:create', onCreate);
    map.on('pm:cut', onCut);
    map.on('pm:remove', report);
    drawn.on('pm:edit', report);
    return () => {
      active = false;
      map.off('pm:create', onCreate);
      map.off('pm:cut', onCut);
      map.off('pm:remove', report);
      drawn.off('pm:edit', report);
      map.pm.disableDraw();
      map.pm.disableGlobalEditMode();
      map.pm.disableGlobalDragMode();
      map.pm.disableGlobalRemovalMode();
      map.pm.disableGlobalCutMode();
      drawn.remove();
    };
  }, [map]);

  useEffect(() => {
    map.pm.addControls(toolbar(allowHoles));
    return () => map.pm.removeControls();
  }, [map, allowHoles]);

  return null;
}
