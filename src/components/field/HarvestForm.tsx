import { useEffect, useRef, useState } from 'react';
import type { SpeciesAnswer, Tally } from '../../lib/field/types';
import { measures, unitCodes, units, type Measure, type Unit } from '../../lib/units';
import { sendJson } from '../api-client';
import { TallyBars } from './SpeciesTallies';

type Projection = { tallies: Tally[]; wouldBreach: boolean };

/** One quantity per kind its limits count ("200 g or 50 plants": both); a species with no limit takes any one unit. */
type Amount = { measure: Measure | null; quantity: string; unit: Unit };

function amountsFor(species: SpeciesAnswer | undefined): Amount[] {
  const limited = measures.filter((m) => species?.tallies.some((t) => t.measure === m));
  if (limited.length === 0) return [{ measure: null, quantity: '', unit: 'g' }];
  return limited.map((m) => ({ measure: m, quantity: '', unit: (species?.tallies.find((t) => t.measure === m)?.limit.unit ?? 'g') as Unit }));
}

const unitsOf = (measure: Measure | null) => unitCodes.filter((u) => measure === null || units[u].measure === measure);

/**
 * Records what was taken. Before saving it shows the tallies as they would be; an entry that would
 * go over needs the forager's explicit acknowledgement. One key per entry makes a retry safe.
 */
export default function HarvestForm({ visitId, species, onSaved }: { visitId: string; species: SpeciesAnswer[]; onSaved: () => void }) {
  const open = species.filter((s) => s.inSeason && s.state !== 'out-of-season');
  const [speciesId, setSpeciesId] = useState(open[0]?.speciesId ?? '');
  const chosen = open.find((s) => s.speciesId === speciesId);
  const [amounts, setAmounts] = useState<Amount[]>(() => amountsFor(chosen));
  const [method, setMethod] = useState(chosen?.methods[0] ?? 'pick');
  const [acknowledge, setAcknowledge] = useState(false);
  const [photo, setPhoto] = useState<File | null>(null);
  const [projection, setProjection] = useState<Projection | null>(null);
  const [problem, setProblem] = useState<{ field?: string; message: string } | null>(null);
  const [busy, setBusy] = useState(false);
  const key = useRef(crypto.randomUUID());

  useEffect(() => {
    if (!chosen) return;
    setAmounts(amountsFor(chosen));
    setMethod(chosen.methods[0] ?? 'pick');
  }, [speciesId]);

  const filled = amounts.every((a) => a.quantity.trim() !== '');
  const quantities = () => amounts.map(({ quantity, unit }) => ({ quantity, unit }));
  const body = () => ({ idempotencyKey: key.current, visitId, speciesId, method, quantities: quantities(), acknowledgeOver: acknowledge });
  const setAmount = (i: number, change: Partial<Amount>) => setAmounts((all) => all.map((a, j) => (j === i ? { ...a, ...change } : a)));

  useEffect(() => {
    setProjection(null);
    if (!filled || !speciesId) return;
    const timer = setTimeout(async () => {
      const result = await sendJson('POST', '/api/harvest-entries/preview', body());
      if (result.ok) { setProjection(result.data as Projection); setProblem(null); }
      else setProblem(result.error);
    }, 300);
    return () => clearTimeout(timer);
  }, [JSON.stringify(amounts), speciesId, method]);

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
    setAmounts(amountsFor(chosen));
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
      {amounts.length > 1 && <p className="text-sm text-loam-700">The limits here count {amounts.length} kinds of quantity; give each.</p>}
      {amounts.map((a, i) => {
        const suffix = i === 0 ? '' : `-${i + 1}`;
        return (
          <div key={a.measure ?? 'any'} className="grid grid-cols-2 gap-3" data-measure={a.measure ?? 'any'}>
            <div>
              <label className="field-label" htmlFor={`harvest-quantity${suffix}`}>Quantity{amounts.length > 1 ? ` (${units[a.unit].label})` : ''}</label>
              <input id={`harvest-quantity${suffix}`} inputMode="decimal" className="field-input" value={a.quantity} onChange={(e) => setAmount(i, { quantity: e.target.value })} aria-invalid={problem?.field === 'quantities'} />
            </div>
            <div>
              <label className="field-label" htmlFor={`harvest-unit${suffix}`}>Unit</label>
              <select id={`harvest-unit${suffix}`} className="field-input" value={a.unit} onChange={(e) => setAmount(i, { unit: e.target.value as Unit })}>
                {unitsOf(a.measure).map((u) => <option key={u} value={u}>{units[u].label}</option>)}
              </select>
            </div>
          </div>
        );
      })}
      {fieldError('quantities')}
      {fieldError('unit')}
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
      {problem && !['speciesId', 'quantities', 'unit', 'method', 'photo'].includes(problem.field ?? '') && <p role="alert" className="field-error">{problem.message}</p>}
      <button type="submit" className="button w-full" disabled={busy || !filled || (projection?.wouldBreach && !acknowledge)}>{busy ? 'Saving…' : 'Save entry'}</button>
    </form>
  );
}
