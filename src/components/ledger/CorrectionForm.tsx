import { zodResolver } from '@hookform/resolvers/zod';
import { useRef, useState } from 'react';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import type { LedgerEntry } from '../../db/ledger.queries';
import type { Tally } from '../../lib/field/types';
import { formatDate } from '../../lib/format';
import { flagScopeWords, formatQuantities, formatQuantity, formatUsage, stateLabel } from '../../lib/tally-words';
import { units } from '../../lib/units';
import { sendJson } from '../api-client';
import { adjustTo, chainMeasures, reverseAll, type CorrectionQuantity } from './correction-plan';
import { formatEntryQuantities, formatRecordedAt } from './ledger-view';

/** The same words as the API's correction schema (src/lib/field.schemas.ts), so a person reads one message either way. */
const amount = z
  .string()
  .trim()
  .min(1, 'Enter how much the entry should count, like 250 or 1.5.')
  .refine((v) => !v.startsWith('-'), 'A quantity cannot be negative; to take the whole entry back, choose “Take it back entirely”.')
  .refine((v) => /^\d+(\.\d{1,6})?$/.test(v), 'Enter a number, like 250 or 1.5 (at most 6 decimals).')
  .refine((v) => Number(v) < 1e7, 'That quantity is too large.');

const correctionFormSchema = z
  .object({
    mode: z.enum(['adjust', 'reverse']),
    amounts: z.array(z.string()),
    reason: z.string().trim().min(3, 'Say why you correct the entry.').max(500, 'Keep the reason to 500 characters or fewer.'),
    acknowledgeOver: z.boolean(),
  })
  .superRefine((values, ctx) => {
    if (values.mode !== 'adjust') return;
    values.amounts.forEach((value, i) => {
      const checked = amount.safeParse(value);
      if (!checked.success) ctx.addIssue({ code: 'custom', path: ['amounts', i], message: checked.error.issues[0]?.message ?? 'Enter a number.' });
    });
  });

type CorrectionFormValues = z.infer<typeof correctionFormSchema>;

/** What the ledger shows once a correction is saved. */
export type CorrectionSaved = { entryId: string; words: string; breach: boolean };

type WouldGoOver = { tallies: Tally[] };

/**
 * Corrects one entry from the ledger: a new quantity for the whole chain, or taking it back
 * entirely, with a reason. Shows the chain so far. A correction that would take a limit over on the
 * day it counts on is refused by the server until the forager confirms it, as in the Field.
 */
export default function CorrectionForm({ entry, chain, onSaved, onCancel }: { entry: LedgerEntry; chain: LedgerEntry[]; onSaved: (saved: CorrectionSaved) => void; onCancel: () => void }) {
  const measures = chainMeasures(chain);
  const key = useRef(crypto.randomUUID());
  const [over, setOver] = useState<WouldGoOver | null>(null);
  const { register, handleSubmit, setError, watch, formState } = useForm<CorrectionFormValues>({
    resolver: zodResolver(correctionFormSchema),
    defaultValues: { mode: 'adjust', amounts: measures.map(() => ''), reason: '', acknowledgeOver: false },
  });
  const { errors, isSubmitting } = formState;
  const mode = watch('mode');
  const acknowledged = watch('acknowledgeOver');
  const id = (name: string) => `correct-${entry.id}-${name}`;
  const nowWords = formatQuantities(measures.map((m) => ({ quantity: m.counts, unit: m.unit })));

  const onSubmit = handleSubmit(async (values) => {
    const quantities: CorrectionQuantity[] = values.mode === 'reverse' ? reverseAll(measures) : adjustTo(measures, values.amounts.map((a) => a.trim()));
    if (quantities.length === 0) {
      if (values.mode === 'reverse') return setError('root', { message: 'This entry already counts nothing; there is nothing left to take back.' });
      return setError('amounts.0', { message: `The entry already counts ${nowWords}. Enter a different quantity, or take it back entirely.` });
    }
    const result = await sendJson('POST', `/api/harvest-entries/${entry.id}/corrections`, {
      idempotencyKey: key.current, reason: values.reason.trim(), quantities, acknowledgeOver: values.acknowledgeOver,
    });
    if (!result.ok) {
      const error = result.error as typeof result.error & { details?: { projection?: WouldGoOver } };
      if (error.code === 'would-go-over') {
        setOver({ tallies: error.details?.projection?.tallies ?? [] });
        return setError('acknowledgeOver', { message: error.message });
      }
      if (error.field === 'reason') return setError('reason', { message: error.message });
      if (error.field === 'quantities' && values.mode === 'adjust') return setError('amounts.0', { message: error.message });
      return setError('root', { message: error.message });
    }
    const saved = (result.data as { entry: { id: string; breach: boolean } }).entry;
    key.current = crypto.randomUUID();
    const after = values.mode === 'reverse' ? 'taken back entirely: it now counts nothing' : `now counts ${formatQuantities(measures.map((m, i) => ({ quantity: values.amounts[i]?.trim() || m.counts, unit: m.unit })))}`;
    onSaved({
      entryId: saved.id,
      breach: saved.breach,
      words: `Correction saved. ${entry.speciesName} on ${entry.parcelName}, counted on ${formatDate(entry.countedOn)}, ${after} (it counted ${nowWords}).`,
    });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4" data-testid="correction-form" aria-labelledby={id('title')}>
      <h3 id={id('title')} className="text-base font-semibold">Correct this entry</h3>
      <div>
        <p className="text-sm font-semibold">The entry and its corrections so far</p>
        <ol className="mt-1 space-y-1 text-sm" data-testid="correction-chain">
          {chain.map((e) => (
            <li key={e.id} data-chain-entry={e.id} className="rounded-md bg-loam-50 px-2 py-1">
              <span className="font-semibold">{e.correctsEntryId ? 'Correction' : 'Recorded'} {formatDate(e.localDate)}</span>
              {': '}
              {formatEntryQuantities(e)}
              {e.correctionReason && <> — “{e.correctionReason}”</>}
              <span className="block text-xs text-loam-700">{formatRecordedAt(e.recordedAt, e.timeZone)}{e.recordedByName ? `, by ${e.recordedByName}` : ''}</span>
            </li>
          ))}
        </ol>
        <p className="mt-2 text-sm" data-testid="chain-counts">It counts {nowWords} now, on {formatDate(entry.countedOn)} (the day it counts on stays the same).</p>
      </div>

      <fieldset>
        <legend className="field-label">What should it count?</legend>
        <label className="mt-1 flex items-center gap-2 text-sm">
          <input type="radio" value="adjust" className="h-4 w-4 accent-moss-600" {...register('mode')} /> A different quantity
        </label>
        <label className="mt-1 flex items-center gap-2 text-sm">
          <input type="radio" value="reverse" className="h-4 w-4 accent-moss-600" {...register('mode')} /> Take it back entirely (it counts nothing)
        </label>
      </fieldset>

      {mode === 'adjust' && measures.map((m, i) => {
        const message = errors.amounts?.[i]?.message;
        const label = units[m.unit].label;
        return (
          <div key={m.measure}>
            <label htmlFor={id(`amount-${i}`)} className="field-label">New quantity{measures.length > 1 ? ` (${label})` : ''}</label>
            <div className="flex items-center gap-2">
              <input
                id={id(`amount-${i}`)} inputMode="decimal" autoComplete="off" className="field-input min-w-0 max-w-[10rem]"
                aria-invalid={message ? 'true' : 'false'} aria-describedby={message ? id(`amount-${i}-error`) : id(`amount-${i}-help`)}
                {...register(`amounts.${i}`)}
              />
              <span className="shrink-0 text-sm font-semibold text-loam-800" data-testid="correction-unit">{label}</span>
            </div>
            {message
              ? <p id={id(`amount-${i}-error`)} role="alert" className="field-error">{message}</p>
              : <p id={id(`amount-${i}-help`)} className="mt-1 text-xs text-loam-700">Now {formatQuantity({ quantity: m.counts, unit: m.unit })}; the correction adds or takes away the difference.</p>}
          </div>
        );
      })}

      <div>
        <label htmlFor={id('reason')} className="field-label">Reason</label>
        <textarea
          id={id('reason')} rows={2} className="field-input" placeholder="e.g. weighed again at home"
          aria-invalid={errors.reason ? 'true' : 'false'} aria-describedby={errors.reason ? id('reason-error') : undefined}
          {...register('reason')}
        />
        {errors.reason && <p id={id('reason-error')} role="alert" className="field-error">{errors.reason.message}</p>}
      </div>

      {over && (
        <div className="rounded-md border-2 border-ember-600 bg-ember-50 p-3 text-sm" data-testid="correction-over">
          <p className="font-semibold text-ember-700">{errors.acknowledgeOver?.message ?? 'This correction would take a limit over on the day it counts on.'}</p>
          <ul className="mt-2 space-y-1">
            {over.tallies.map((t) => (
              <li key={`${t.scope}|${t.measure}`} data-state={t.state}>
                {flagScopeWords[t.scope]}: {formatUsage({ used: t.used, limit: t.limit.quantity, unit: t.limit.unit, percent: t.percent })} — {stateLabel(t.state)}
              </li>
            ))}
          </ul>
          <label className="mt-3 flex items-start gap-2 font-semibold text-ember-700">
            <input type="checkbox" className="mt-1" {...register('acknowledgeOver')} />
            This takes a limit over. I record it knowingly; it is flagged and the landowner is told.
          </label>
        </div>
      )}

      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <div className="flex flex-wrap gap-2">
        <button type="submit" className="button" disabled={isSubmitting || (over !== null && !acknowledged)}>
          {isSubmitting ? 'Saving…' : mode === 'reverse' ? 'Take it back' : 'Save correction'}
        </button>
        <button type="button" className="button-quiet" onClick={onCancel}>Cancel</button>
      </div>
    </form>
  );
}
