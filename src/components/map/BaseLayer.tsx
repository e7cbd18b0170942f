import { useEffect } from 'react';
import { useMap } from 'react-leaflet';
import { readBaseLayer, type BaseLayerData } from './base-layer';
import { L } from './leaflet-setup';
import { baseLabelStyles, baseLineStyles } from './map-styles';

/** Under the parcels (overlay pane, 400), over the tiles (200). */
export const basePane = 'tallywood-base';

/** One request per URL per page, however many maps; the browser keeps the file between pages. */
const loaded = new Map<string, Promise<BaseLayerData>>();
function loadBaseLayer(url: string): Promise<BaseLayerData> {
  let promise = loaded.get(url);
  if (!promise) {
    promise = fetch(url)
      .then((response) => (response.ok ? response.json() : null))
      .then(readBaseLayer)
      .catch(() => ({ lines: [], attribution: '' }));
    loaded.set(url, promise);
  }
  return promise;
}

const svgNs = 'http://www.w3.org/2000/svg';
let nextId = 0;

/**
 * A name for a line, in the pane's SVG beside the line's own path: written along an unseen straight
 * guide that `placeLabel` lays over the line, so a bend never scatters the letters.
 */
function writeAlong(path: SVGPathElement, name: string, style: { fill: string; italic: boolean }): { text: SVGTextElement; guide: SVGPathElement } {
  const id = `tallywood-base-guide-${(nextId += 1)}`;
  const guide = document.createElementNS(svgNs, 'path');
  guide.id = id;
  guide.setAttribute('fill', 'none');
  guide.setAttribute('stroke', 'none');
  // Long and straight until placed, so the name can be measured whole.
  guide.setAttribute('d', 'M0 0H4000');
  const text = document.createElementNS(svgNs, 'text');
  text.setAttribute('class', 'tallywood-base-label');
  text.setAttribute('dy', '-4');
  text.setAttribute('fill', style.fill);
  text.setAttribute('font-size', '11');
  text.setAttribute('font-weight', '500');
  if (style.italic) text.setAttribute('font-style', 'italic');
  text.setAttribute('stroke', '#f5f1e6');
  text.setAttribute('stroke-width', '3');
  text.setAttribute('stroke-linejoin', 'round');
  text.setAttribute('paint-order', 'stroke');
  text.setAttribute('letter-spacing', '0.3');
  text.style.pointerEvents = 'none';
  const along = document.createElementNS(svgNs, 'textPath');
  along.setAttribute('href', `#${id}`);
  along.setAttribute('startOffset', '50%');
  along.setAttribute('text-anchor', 'middle');
  along.textContent = name;
  text.appendChild(along);
  path.after(guide, text);
  return { text, guide };
}

/**
 * Lays the guide as the chord of the line's stretch around `middle` (px along the path), as long as
 * the name and a little more, left to right so the name is never upside down.
 */
function placeLabel(path: SVGPathElement, guide: SVGPathElement, middle: number, length: number) {
  const half = length / 2 + 8;
  let a = path.getPointAtLength(Math.max(0, middle - half));
  let b = path.getPointAtLength(Math.min(path.getTotalLength(), middle + half));
  if (a.x > b.x) [a, b] = [b, a];
  guide.setAttribute('d', `M${a.x.toFixed(1)} ${a.y.toFixed(1)}L${b.x.toFixed(1)} ${b.y.toFixed(1)}`);
}

/** Sample spacing along a line, in px, when finding the stretch of it inside the view. */
const sampleStep = 12;
const margin = 6;

/** The longest stretch of a drawn path inside the map's container: its length and middle, in px along the path. */
function longestRunInView(path: SVGPathElement, toContainer: (p: L.Point) => L.Point, size: L.Point): { length: number; middle: number } | null {
  const total = path.getTotalLength();
  let best: { start: number; end: number } | null = null;
  let start: number | null = null;
  for (let at = 0; at <= total + sampleStep; at += sampleStep) {
    const along = Math.min(at, total);
    const point = path.getPointAtLength(along);
    const { x, y } = toContainer(L.point(point.x, point.y));
    const inside = at <= total && x >= margin && y >= margin && x <= size.x - margin && y <= size.y - margin;
    if (inside && start === null) start = along;
    if (!inside && start !== null) {
      if (!best || along - start > best.end - best.start) best = { start, end: along };
      start = null;
    }
  }
  return best ? { length: best.end - best.start, middle: (best.start + best.end) / 2 } : null;
}

/**
 * The land under the parcels when no tile server is configured: brooks, roads, trails and ridges
 * with their names written along them from zoom 13 (trails 14). Nothing here takes a click or a tap:
 * the lines are not interactive and the names let pointer events through to the map.
 */
export default function BaseLayer({ url }: { url: string }) {
  const map = useMap();

  useEffect(() => {
    if (!map.getPane(basePane)) {
      const pane = map.createPane(basePane);
      pane.style.zIndex = '350';
      pane.style.pointerEvents = 'none';
    }
    let active = true;
    const group = L.layerGroup();
    const labels: { text: SVGTextElement; guide: SVGPathElement; path: SVGPathElement; minZoom: number }[] = [];
    // Its own renderer, so the names are laid out on its 'update', after it has redrawn the lines.
    const renderer = L.svg({ pane: basePane });
    // A name shows from its zoom on, in the middle of the longest stretch of its line inside the
    // view, and only where that stretch is longer than the name: never cut off by the map's edge.
    const showLabels = () => {
      const zoom = map.getZoom();
      const size = map.getSize();
      for (const { text, guide, path, minZoom } of labels) {
        const run = zoom >= minZoom ? longestRunInView(path, (p) => map.layerPointToContainerPoint(p), size) : null;
        // Measured each time: the web font may have arrived since, and it is wider than the fallback.
        guide.setAttribute('d', 'M0 0H4000');
        text.style.display = '';
        const length = text.getComputedTextLength();
        const fits = run !== null && run.length > length + 32;
        if (fits) placeLabel(path, guide, run.middle, length);
        text.style.display = fits ? '' : 'none';
      }
    };

    void loadBaseLayer(url).then(({ lines, attribution }) => {
      if (!active) return;
      group.addTo(map);
      for (const { kind, name, line } of lines) {
        const latLngs = line.map(([lon, lat]) => [lat, lon] as [number, number]);
        const strokes = baseLineStyles[kind].map((style, i, all) =>
          L.polyline(latLngs, {
            ...style,
            pane: basePane,
            renderer,
            interactive: false,
            // The top stroke of each line carries its kind as a class, for the tests and for styling.
            className: i === all.length - 1 ? `tallywood-base-${kind}` : `tallywood-base-casing`,
            attribution: attribution || undefined,
            pmIgnore: true,
            snapIgnore: true,
          }).addTo(group),
        );
        const top = strokes[strokes.length - 1]?.getElement();
        if (top instanceof SVGPathElement) {
          const { text, guide } = writeAlong(top, name, baseLabelStyles[kind]);
          labels.push({ text, guide, path: top, minZoom: baseLabelStyles[kind].minZoom });
        }
      }
      showLabels();
      renderer.on('update', showLabels);
    });
    return () => {
      active = false;
      renderer.off('update', showLabels);
      for (const { text, guide } of labels) {
        text.remove();
        guide.remove();
      }
      group.remove();
      renderer.remove();
    };
  }, [map, url]);

  return null;
}
