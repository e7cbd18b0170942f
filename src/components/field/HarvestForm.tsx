import { useEffect, useRef, useState } from 'react';
import { doubtfulQuantity, type Doubt } from '../../lib/field/plausibility';
import type { EntryQuantity, Method, SpeciesAnswer, Tally } from '../../lib/field/types';
import { formatQuantity } from '../../lib/tally-words';
import { measures, unitCodes, units, type Measure, type Unit } from '../../lib/units';
import type { ApiResult } from '../api-client';
import { TallyBars } from './SpeciesTallies';

type Projection = { tallies: Tally[]; wouldBreach: boolean };

/** What the form asks to preview or save. */
export type HarvestDraft = { idempotencyKey: string; speciesId: string; method: Method; quantities: EntryQuantity[]; acknowledgeOver: boolean; photo: File | null };

/**
 * Where entries go: to the server (online, in a visit), or onto the phone's queue (offline, decided
 * from the field pack). `preview` answers the tallies as they would be; `save` records the entry.
 */
export type Recorder = {
  offline: boolean;
  preview: (draft: HarvestDraft) => Promise<ApiResult>;
  save: (draft: HarvestDraft) => Promise<ApiResult>;
};

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
export default function HarvestForm({ recorder, species, onSaved }: { recorder: Recorder; species: SpeciesAnswer[]; onSaved: (words: string) => void }) {
  const open = species.filter((s) => s.inSeason && s.state !== 'out-of-season');
  const [speciesId, setSpeciesId] = useState(open[0]?.speciesId ?? '');
  const chosen = open.find((s) => s.speciesId === speciesId);
  const [amounts, setAmounts] = useState<Amount[]>(() => amountsFor(chosen));
  const [method, setMethod] = useState(chosen?.methods[0] ?? 'pick');
  const [acknowledge, setAcknowledge] = useState(false);
  const [photo, setPhoto] = useState<File | null>(null);
  // A new file input after each save: the chosen photo never carries over to the next entry.
  const [photoInput, setPhotoInput] = useState(0);
  const [doubtSettled, setDoubtSettled] = useState<string | null>(null);
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
  const draft = (): HarvestDraft => ({ idempotencyKey: key.current, speciesId, method, quantities: quantities(), acknowledgeOver: acknowledge, photo });
  const doubts = amounts.map((a) => ({ amount: a, doubt: doubtfulQuantity(a.quantity.trim(), a.unit, chosen?.tallies ?? []) })).filter((d): d is { amount: Amount; doubt: Doubt } => d.doubt !== null);
  const doubtKey = JSON.stringify(amounts);
  const doubtOpen = doubts.length > 0 && doubtSettled !== doubtKey;
  const setAmount = (i: number, change: Partial<Amount>) => setAmounts((all) => all.map((a, j) => (j === i ? { ...a, ...change } : a)));

  useEffect(() => {
    setProjection(null);
    if (!filled || !speciesId) return;
    const timer = setTimeout(async () => {
      const result = await recorder.preview(draft());
      if (result.ok) { setProjection(result.data as Projection); setProblem(null); }
      else setProblem(result.error);
    }, 300);
    return () => clearTimeout(timer);
  }, [JSON.stringify(amounts), speciesId, method]);

  if (open.length === 0) return <p className="card">Nothing allowed here is in season today.</p>;

  async function save() {
    setBusy(true);
    setProblem(null);
    const result = await recorder.save(draft());
    setBusy(false);
    if (!result.ok) return setProblem(result.error);
    const words = `${chosen?.commonName ?? 'Entry'}, ${amounts.map((a) => formatQuantity({ quantity: a.quantity.trim(), unit: a.unit })).join(' and ')}`;
    key.current = crypto.randomUUID();
    // The next entry starts empty in the units just used.
    setAmounts((all) => all.map((a) => ({ ...a, quantity: '' })));
    setAcknowledge(false);
    setPhoto(null);
    setPhotoInput((n) => n + 1);
    onSaved(words);
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
              <div className="flex items-center gap-2">
                <input id={`harvest-quantity${suffix}`} inputMode="decimal" className="field-input min-w-0" value={a.quantity} onChange={(e) => setAmount(i, { quantity: e.target.value })} aria-invalid={problem?.field === 'quantities'} />
                <span className="shrink-0 text-sm font-semibold text-loam-800" data-testid="quantity-unit">{units[a.unit].label}</span>
              </div>
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
      {doubtOpen && (
        <div role="alert" className="rounded-md border-2 border-loam-500 bg-lichen-50 p-3 text-sm" data-testid="doubt">
          {doubts.map(({ amount, doubt }) => (
            <p key={amount.unit}>
              {formatQuantity({ quantity: amount.quantity.trim(), unit: amount.unit })} is more than ten times this visit's limit of {formatQuantity(doubt.limit.limit)}.
              {doubt.suggestion ? ` Did you mean ${formatQuantity({ quantity: amount.quantity.trim(), unit: doubt.suggestion })}?` : ' Is that right?'}
            </p>
          ))}
          <div className="mt-2 flex flex-wrap gap-2">
            {doubts.some((d) => d.doubt.suggestion) && (
              <button type="button" className="button-quiet" onClick={() => setAmounts((all) => all.map((a) => ({ ...a, unit: doubts.find((d) => d.amount === a)?.doubt.suggestion ?? a.unit })))}>
                Yes, use {doubts.map((d) => units[d.doubt.suggestion ?? d.amount.unit].label).join(' and ')}
              </button>
            )}
            <button type="button" className="button-quiet" onClick={() => setDoubtSettled(doubtKey)}>No, the amount is right</button>
          </div>
        </div>
      )}
      {fieldError('quantities')}
      {fieldError('unit')}
      <label className="field-label" htmlFor="harvest-method">Method</label>
      <select id="harvest-method" className="field-input" value={method} onChange={(e) => setMethod(e.target.value as typeof method)}>
        {chosen?.methods.map((m) => <option key={m} value={m}>{m}</option>)}
      </select>
      {fieldError('method')}
      {recorder.offline ? (
        <p className="text-sm text-loam-700">Photos need signal, so an entry kept on this phone is saved without one. Take the photo now with your camera if you want a record of it.</p>
      ) : (
        <>
          <label className="field-label" htmlFor="harvest-photo">Photo (optional)</label>
          <input key={photoInput} id="harvest-photo" type="file" accept="image/*" capture="environment" className="block max-w-full text-sm" onChange={(e) => setPhoto(e.currentTarget.files?.[0] ?? null)} />
          {fieldError('photo')}
        </>
      )}
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
      <button type="submit" className="button w-full" disabled={busy || !filled || doubtOpen || (projection?.wouldBreach && !acknowledge)}>
        {busy ? 'Saving…' : recorder.offline ? 'Keep entry on this phone' : 'Save entry'}
      </button>
    </form>
  );
}
