import tzLookup from '@photostructure/tz-lookup';
import { useMemo, useState } from 'react';
import ParcelMap, { type ParcelMapProps } from '../map/ParcelMap';
import { sendJson, type ApiResult } from '../api-client';
import { formatArea } from '../../lib/format';
import type { BoundaryGeometry } from '../../lib/land.schemas';
import { useHydrated } from '../useHydrated';

type Problem = { code: string; message: string; at?: [number, number] };
type Warning = { code: string; message: string };
type Checked = { name: string | null; geometry: BoundaryGeometry; ok: boolean; areaM2?: number; problems?: Problem[]; warnings?: Warning[] };
type Props = {
  /** create: a new parcel; edit: a new boundary for `parcelId`; zone: a no-harvest zone inside it. */
  mode: 'create' | 'edit' | 'zone';
  parcelId?: string;
  tiles: ParcelMapProps['tiles'];
  initial?: BoundaryGeometry;
  /** The parcel a zone is drawn inside, shown for reference. */
  context?: BoundaryGeometry;
};

/** The first vertex of a boundary, as [lon, lat]. */
function firstVertex(g: BoundaryGeometry): [number, number] | null {
  const ring = g.type === 'Polygon' ? g.coordinates[0] : g.coordinates[0]?.[0];
  const p = ring?.[0];
  return p && p.length >= 2 ? [p[0] ?? 0, p[1] ?? 0] : null;
}

function guessTimeZone(g: BoundaryGeometry | undefined) {
  const at = g && firstVertex(g);
  try {
    return at ? tzLookup(at[1], at[0]) : 'America/New_York';
  } catch {
    return 'America/New_York';
  }
}

function merged(features: Checked[]): BoundaryGeometry {
  return { type: 'MultiPolygon', coordinates: features.flatMap((f) => (f.geometry.type === 'Polygon' ? [f.geometry.coordinates] : f.geometry.coordinates)) };
}

/**
 * Draw a boundary on the map or upload a GeoJSON, KML or GPX file; the server checks it (PostGIS
 * is the authority) and the result is previewed, with problems marked where they are, before saving.
 */
export default function BoundaryEditor({ mode, parcelId, tiles, initial, context }: Props) {
  const hydrated = useHydrated();
  const [source, setSource] = useState<'draw' | 'upload'>('draw');
  const [drawn, setDrawn] = useState<BoundaryGeometry | null>(initial ?? null);
  const [checked, setChecked] = useState<Checked[]>([]);
  const [notes, setNotes] = useState<string[]>([]);
  const [choice, setChoice] = useState<'one' | 'merge' | 'each'>('one');
  const [picked, setPicked] = useState(0);
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [fields, setFields] = useState({ name: '', reason: '', description: '', timeZone: '', nearingThresholdPercent: 80, openToRequests: false });

  const chosen: Checked[] = choice === 'merge' && checked.length > 1 ? [{ name: checked[0]?.name ?? null, geometry: merged(checked), ok: checked.every((c) => c.ok) }] : choice === 'each' ? checked : checked.slice(picked, picked + 1);
  const preview = useMemo(
    () => [
      ...(context ? [{ id: 'context', name: 'Parcel', geometry: context, kind: 'parcel' as const }] : []),
      ...checked.map((c, i) => ({ id: `preview-${i}`, name: c.name ?? `Polygon ${i + 1}`, geometry: c.geometry, kind: 'preview' as const })),
    ],
    [checked, context],
  );
  const markers = checked.flatMap((c) => (c.problems ?? []).filter((p) => p.at).map((p) => ({ at: p.at as [number, number], label: p.message, tone: 'problem' as const })));

  async function check(request: () => Promise<Response>) {
    setBusy(true);
    setProblem(null);
    try {
      const response = await request();
      const body = await response.json();
      if (!response.ok) {
        setChecked([]);
        setProblem(body?.error?.message ?? `The server answered ${response.status}.`);
        return;
      }
      setChecked(body.features);
      setNotes(body.notes ?? []);
      setPicked(0);
      const first = body.features[0] as Checked | undefined;
      setFields((f) => ({ ...f, name: f.name || first?.name || '', timeZone: f.timeZone || guessTimeZone(first?.geometry) }));
    } catch {
      setProblem('No connection to Tallywood. Check your signal and try again.');
    } finally {
      setBusy(false);
    }
  }

  const checkDrawn = () => drawn && check(() => fetch('/api/boundaries/check', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ geometry: drawn }) }));
  const checkFile = (file: File) => {
    const form = new FormData();
    form.set('file', file);
    return check(() => fetch('/api/boundaries/check', { method: 'POST', body: form }));
  };

  async function save() {
    setBusy(true);
    setProblem(null);
    let last: ApiResult | null = null;
    for (const [i, c] of chosen.entries()) {
      if (mode === 'create') {
        const name = chosen.length > 1 ? c.name || `${fields.name} ${i + 1}` : fields.name;
        last = await sendJson('POST', '/api/parcels', { ...fields, name, timeZone: fields.timeZone || guessTimeZone(c.geometry), boundary: c.geometry });
      } else if (mode === 'edit') {
        last = await sendJson('PATCH', `/api/parcels/${parcelId}`, { boundary: c.geometry });
      } else {
        last = await sendJson('POST', `/api/parcels/${parcelId}/zones`, { name: fields.name, reason: fields.reason, boundary: c.geometry });
      }
      if (!last.ok) break;
    }
    setBusy(false);
    if (!last) return;
    if (!last.ok) return setProblem(last.error.message);
    const created = (last.data as { parcel?: { id: string } }).parcel;
    if (mode === 'create') window.location.assign(chosen.length > 1 || !created ? '/land' : `/land/${created.id}`);
    else window.location.reload();
  }

  const canSave = chosen.length > 0 && chosen.every((c) => c.ok) && (mode === 'edit' || fields.name.trim() !== '');
  return (
    <div className="space-y-4" data-testid={`boundary-editor-${mode}`} data-hydrated={hydrated ? 'true' : undefined}>
      {mode !== 'zone' && (
        <div role="tablist" className="flex gap-2">
          <button type="button" role="tab" aria-selected={source === 'draw'} className={source === 'draw' ? 'button' : 'button-quiet'} onClick={() => setSource('draw')}>Draw on the map</button>
          <button type="button" role="tab" aria-selected={source === 'upload'} className={source === 'upload' ? 'button' : 'button-quiet'} onClick={() => setSource('upload')}>Upload a file</button>
        </div>
      )}
      {source === 'draw' || mode === 'zone' ? (
        <div className="space-y-2">
          <p className="text-sm text-loam-700">Use the polygon tool to draw; {mode === 'zone' ? 'keep the zone inside the parcel.' : 'draw several shapes for a parcel in parts, and cut holes with the scissors tool.'}</p>
          <ParcelMap tiles={tiles} features={context ? [{ id: 'context', name: 'Parcel', geometry: context, kind: 'parcel' }] : []} fitTo={context || initial ? 'features' : undefined}
            editable={{ initial: initial ?? null, allowHoles: mode !== 'zone', allowMultipleParts: mode !== 'zone', onChange: (g) => { setDrawn(g); setChecked([]); } }}
            markers={markers} testId={`draw-map-${mode}`} />
          <button type="button" className="button-quiet" disabled={!drawn || busy} onClick={checkDrawn}>Check the drawing</button>
        </div>
      ) : (
        <div className="space-y-2">
          <label className="field-label" htmlFor={`boundary-file-${mode}`}>Boundary file (GeoJSON, KML or GPX, up to 5 MB)</label>
          <input id={`boundary-file-${mode}`} type="file" accept=".geojson,.json,.kml,.gpx,application/geo+json,application/vnd.google-earth.kml+xml,application/gpx+xml" className="block text-sm"
            onChange={(e) => { const file = e.currentTarget.files?.[0]; if (file) void checkFile(file); }} />
          {checked.length > 0 && <ParcelMap tiles={tiles} features={preview} markers={markers} testId={`preview-map-${mode}`} />}
        </div>
      )}
      {busy && <p role="status" className="text-sm">Checking…</p>}
      {problem && <p role="alert" className="field-error">{problem}</p>}
      {notes.map((n) => <p key={n} className="text-xs text-loam-700">{n}</p>)}

      {checked.length > 0 && (
        <div className="space-y-3 rounded-md border border-loam-200 bg-lichen-50 p-3" data-testid="boundary-check">
          {checked.length > 1 && (
            <fieldset className="space-y-1 text-sm">
              <legend className="field-label">The file holds {checked.length} polygons</legend>
              <label className="flex gap-2"><input type="radio" checked={choice === 'one'} onChange={() => setChoice('one')} /> use one of them:
                <select aria-label="Which polygon" className="rounded border border-loam-300" value={picked} onChange={(e) => setPicked(Number(e.target.value))}>
                  {checked.map((c, i) => <option key={i} value={i}>{c.name ?? `Polygon ${i + 1}`}</option>)}
                </select></label>
              <label className="flex gap-2"><input type="radio" checked={choice === 'merge'} onChange={() => setChoice('merge')} /> merge them into one parcel in parts</label>
              {mode === 'create' && <label className="flex gap-2"><input type="radio" checked={choice === 'each'} onChange={() => setChoice('each')} /> make one parcel of each</label>}
            </fieldset>
          )}
          <ul className="space-y-1 text-sm">
            {checked.map((c, i) => (
              <li key={i}>
                <strong>{c.name ?? `Polygon ${i + 1}`}</strong>: {c.ok ? `ready to save, ${formatArea(c.areaM2 ?? 0)}` : 'cannot be saved yet'}
                {(c.problems ?? []).map((p, j) => <p key={j} role="alert" className="field-error">{p.message}</p>)}
                {(c.warnings ?? []).map((w, j) => <p key={j} className="text-ember-700">Warning: {w.message}</p>)}
              </li>
            ))}
          </ul>
        </div>
      )}

      {mode !== 'edit' && (
        <div className="grid gap-3 sm:grid-cols-2">
          <label className="text-sm font-semibold">{mode === 'zone' ? 'Zone name' : 'Parcel name'}
            <input className="field-input" value={fields.name} onChange={(e) => setFields({ ...fields, name: e.target.value })} /></label>
          {mode === 'zone' ? (
            <label className="text-sm font-semibold">Why nothing may be taken here
              <input className="field-input" value={fields.reason} onChange={(e) => setFields({ ...fields, reason: e.target.value })} /></label>
          ) : (
            <>
              <label className="text-sm font-semibold">Time zone (guessed from the location)
                <input className="field-input" value={fields.timeZone} onChange={(e) => setFields({ ...fields, timeZone: e.target.value })} /></label>
              <label className="text-sm font-semibold">Warn at this share of a limit (%)
                <input type="number" min={1} max={100} className="field-input" value={fields.nearingThresholdPercent} onChange={(e) => setFields({ ...fields, nearingThresholdPercent: Number(e.target.value) })} /></label>
              <p className="text-sm text-loam-700 sm:col-span-2">
                Foragers can ask for access once the parcel has at least one allowance (what may be taken) and terms; you open it to requests in its settings after that.
              </p>
              <label className="text-sm font-semibold sm:col-span-2">Description
                <textarea className="field-input" rows={2} value={fields.description} onChange={(e) => setFields({ ...fields, description: e.target.value })} /></label>
            </>
          )}
        </div>
      )}
      <button type="button" className="button" disabled={!canSave || busy} onClick={save}>
        {mode === 'create' ? (chosen.length > 1 ? `Save ${chosen.length} parcels` : 'Save parcel') : mode === 'edit' ? 'Save new boundary' : 'Save zone'}
      </button>
    </div>
  );
}
