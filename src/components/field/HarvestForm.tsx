import { useEffect, useRef, useState } from 'react';
import type { SpeciesAnswer, Tally } from '../../lib/field/types';
import { unitCodes, units, type Unit } from '../../lib/units';
import { sendJson } from '../api-client';
import { TallyBars } from './SpeciesTallies';

type Projection = { tallies: Tally[]; wouldBreach: boolean };

/**
 * Records what was taken. Before saving it shows the tallies as they would be; an entry that would
 * go over needs the forager's explicit acknowledgement. One key per entry makes a retry safe.
 */
export default function HarvestForm({ visitId, species, onSaved }: { visitId: string; species: SpeciesAnswer[]; onSaved: () => void }) {
  const open = species.filter((s) => s.inSeason && s.state !== 'out-of-season');
  const [speciesId, setSpeciesId] = useState(open[0]?.speciesId ?? '');
  const chosen = open.find((s) => s.speciesId === speciesId);
  const [quantity, setQuantity] = useState('');
  const [unit, setUnit] = useState<Unit>((chosen?.tallies[0]?.limit.unit ?? 'g') as Unit);
  const [method, setMethod] = useState(chosen?.methods[0] ?? 'pick');
  const [acknowledge, setAcknowledge] = useState(false);
  const [photo, setPhoto] = useState<File | null>(null);
  const [projection, setProjection] = useState<Projection | null>(null);
  const [problem, setProblem] = useState<{ field?: string; message: string } | null>(null);
  const [busy, setBusy] = useState(false);
  const key = useRef(crypto.randomUUID());

  useEffect(() => {
    if (!chosen) return;
    setUnit((chosen.tallies[0]?.limit.unit ?? unit) as Unit);
    setMethod(chosen.methods[0] ?? 'pick');
  }, [speciesId]);

  const body = () => ({ idempotencyKey: key.current, visitId, speciesId, method, quantity, unit, acknowledgeOver: acknowledge });

  useEffect(() => {
    setProjection(null);
    if (!quantity || !speciesId) return;
    const timer = setTimeout(async () => {
      const result = await sendJson('POST', '/api/harvest-entries/preview', body());
      if (result.ok) { setProjection(result.data as Projection); setProblem(null); }
      else setProblem(result.error);
    }, 300);
    return () => clearTimeout(timer);
  }, [quantity, unit, speciesId, method]);

  if (open.length === 0) return <p className="card">Nothing allowed here is in season today.</p>;

  async function save() {
    setBusy(true);
    setProblem(null);
    let photoUploadId: string | undefined;
    if (photo) {
      const form = new FormData();
      form.set('photo', photo);
      const response = await fetch('/api/photos', { method: 'POST', body: form }).catch(() => null);
      const data = await response?.json().catch(() => null);
      if (!response?.ok) { setBusy(false); return setProblem({ field: 'photo', message: data?.error?.message ?? 'The photo could not be uploaded.' }); }
      photoUploadId = data.uploadId;
    }
    const result = await sendJson('POST', '/api/harvest-entries', { ...body(), photoUploadId });
    setBusy(false);
    if (!result.ok) return setProblem(result.error);
    key.current = crypto.randomUUID();
    setQuantity('');
    setAcknowledge(false);
    onSaved();
  }

  const fieldError = (name: string) => (problem?.field === name ? <p role="alert" className="field-error">{problem.message}</p> : null);
  return (
    <form className="card space-y-3" data-testid="harvest-form" onSubmit={(e) => { e.preventDefault(); void save(); }}>
      <h2>Record a harvest</h2>
      <label className="field-label" htmlFor="harvest-species">Species</label>
      <select id="harvest-species" className="field-input" value={speciesId} onChange={(e) => setSpeciesId(e.target.value)}>
        {open.map((s) => <option key={s.speciesId} value={s.speciesId}>{s.commonName}</option>)}
      </select>
      {fieldError('speciesId')}
      <div className="grid grid-cols-2 gap-3">
        <div>
          <label className="field-label" htmlFor="harvest-quantity">Quantity</label>
          <input id="harvest-quantity" inputMode="decimal" className="field-input" value={quantity} onChange={(e) => setQuantity(e.target.value)} aria-invalid={problem?.field === 'quantity'} />
          {fieldError('quantity')}
        </div>
        <div>
          <label className="field-label" htmlFor="harvest-unit">Unit</label>
          <select id="harvest-unit" className="field-input" value={unit} onChange={(e) => setUnit(e.target.value as Unit)}>
            {unitCodes.map((u) => <option key={u} value={u}>{units[u].label}</option>)}
          </select>
          {fieldError('unit')}
        </div>
      </div>
      <label className="field-label" htmlFor="harvest-method">Method</label>
      <select id="harvest-method" className="field-input" value={method} onChange={(e) => setMethod(e.target.value as typeof method)}>
        {chosen?.methods.map((m) => <option key={m} value={m}>{m}</option>)}
      </select>
      {fieldError('method')}
      <label className="field-label" htmlFor="harvest-photo">Photo (optional)</label>
      <input id="harvest-photo" type="file" accept="image/*" capture="environment" className="block text-sm" onChange={(e) => setPhoto(e.currentTarget.files?.[0] ?? null)} />
      {fieldError('photo')}
      {projection && (
        <div className="rounded-md bg-lichen-50 p-3" data-testid="projection">
          <p className="text-sm font-semibold">After this entry</p>
          <TallyBars tallies={projection.tallies} />
          {projection.wouldBreach && (
            <label className="mt-3 flex items-start gap-2 rounded-md border-2 border-ember-600 bg-ember-50 p-3 text-sm font-semibold text-ember-700">
              <input type="checkbox" checked={acknowledge} onChange={(e) => setAcknowledge(e.target.checked)} className="mt-1" />
              This takes a limit over. I record it knowingly; it is flagged and the landowner is told.
            </label>
          )}
        </div>
      )}
      {problem && !['speciesId', 'quantity', 'unit', 'method', 'photo'].includes(problem.field ?? '') && <p role="alert" className="field-error">{problem.message}</p>}
      <button type="submit" className="button w-full" disabled={busy || !quantity || (projection?.wouldBreach && !acknowledge)}>{busy ? 'Saving…' : 'Save entry'}</button>
    </form>
  );
}
