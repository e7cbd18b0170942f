import { zodResolver } from '@hookform/resolvers/zod';
import { useEffect, useState } from 'react';
import { useFieldArray, useForm, useWatch } from 'react-hook-form';
import type { z } from 'zod';
import { allowanceSchema, methods, parcelLimitScopes } from '../../lib/land.schemas';
import { unitCodes, units } from '../../lib/units';
import { sendJson } from '../api-client';
import { useHydrated } from '../useHydrated';

type Input = z.input<typeof allowanceSchema>;
type Output = z.output<typeof allowanceSchema>;
type Unit = Input['limits'][number]['unit'];

/** An allowance the parcel already has, as the form edits it. */
export type ExistingAllowance = { allowanceId: string; speciesId: string; speciesName: string; values: Input };

const scopeLabels: Record<(typeof parcelLimitScopes)[number], string> = {
  visit: 'a visit',
  day: 'a day (local calendar day)',
  season: 'a season, per forager',
  'parcel-season': 'a season, everyone together',
};
const methodLabels: Record<(typeof methods)[number], string> = {
  cut: 'cut above ground', pick: 'pick', dig: 'dig roots or bulbs', strip: 'strip bark', 'gather-fallen': 'gather fallen',
};

const blank = (speciesId: string, unit: string): Input => ({ speciesId, seasons: [{ start: '', end: '' }], methods: [], limits: [{ scope: 'visit', quantity: '', unit: unit as Unit }] });

/**
 * The harvest terms of one species: season windows (may cross New Year), methods, limits. With
 * `editing`, it changes that allowance in place (its species stays). Without, it adds one; choosing
 * a species that already has an allowance opens that allowance here instead, so nothing is replaced
 * unseen.
 */
export default function AllowanceForm({ action, species, existing = [], editing, idPrefix = 'allowance' }: {
  /** The parcel's allowances endpoint, /api/parcels/{id}/allowances. */
  action: string;
  species: { id: string; name: string; usualUnit: string }[];
  existing?: ExistingAllowance[];
  /** The allowance this form changes; none: a new allowance. */
  editing?: string;
  /** Keeps ids unique when several forms share a page. */
  idPrefix?: string;
}) {
  const hydrated = useHydrated();
  const initialTarget = existing.find((a) => a.allowanceId === editing);
  const firstFree = species.find((s) => !existing.some((a) => a.speciesId === s.id)) ?? species[0];
  const [target, setTarget] = useState<ExistingAllowance | undefined>(initialTarget);
  const { register, control, handleSubmit, setError, reset, trigger, formState } = useForm<Input, unknown, Output>({
    resolver: zodResolver(allowanceSchema),
    defaultValues: initialTarget?.values ?? blank(firstFree?.id ?? '', firstFree?.usualUnit ?? 'g'),
  });
  const seasons = useFieldArray({ control, name: 'seasons' });
  const limits = useFieldArray({ control, name: 'limits' });
  const { errors, isSubmitting } = formState;

  // A whole-list error ("give each limit once …") is checked again as soon as any limit changes, so it goes once fixed.
  const watchedLimits = useWatch({ control, name: 'limits' });
  const hasListError = Boolean(errors.limits?.message ?? errors.limits?.root?.message);
  useEffect(() => {
    if (hasListError) void trigger('limits');
  }, [JSON.stringify(watchedLimits)]); // eslint-disable-line react-hooks/exhaustive-deps

  const speciesField = register('speciesId', {
    onChange: (event: { target: { value: string } }) => {
      if (editing) return;
      const chosen = event.target.value;
      const other = existing.find((a) => a.speciesId === chosen);
      setTarget(other);
      const s = species.find((x) => x.id === chosen);
      reset(other?.values ?? { ...blank(chosen, s?.usualUnit ?? 'g') });
    },
  });

  const onSubmit = handleSubmit(async (input) => {
    const result = target ? await sendJson('PUT', `${action}/${target.allowanceId}`, input) : await sendJson('POST', action, input);
    if (result.ok) return window.location.reload();
    const field = result.error.field;
    setError(field === 'speciesId' ? 'speciesId' : field?.startsWith('limits') ? 'limits' : field?.startsWith('seasons') ? 'seasons' : field === 'methods' ? 'methods' : 'root', { message: result.error.message });
  });

  const id = (name: string) => `${idPrefix}-${name}`;
  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4" data-hydrated={hydrated ? 'true' : undefined} data-testid={editing ? `allowance-edit-${editing}` : 'allowance-form'}>
      <div>
        <label htmlFor={id('species')} className="field-label">Species</label>
        <select id={id('species')} className="field-input" disabled={Boolean(editing)} aria-describedby={target && !editing ? id('species-note') : undefined} {...speciesField}>
          {species.map((s) => <option key={s.id} value={s.id}>{s.name}{existing.some((a) => a.speciesId === s.id) ? ' (has an allowance)' : ''}</option>)}
        </select>
        {target && !editing && (
          <p id={id('species-note')} role="status" className="mt-1 rounded border border-ember-100 bg-ember-50 px-2 py-1 text-sm" data-testid="allowance-exists">
            {target.speciesName} already has an allowance on this parcel. Its terms are below: change them and save, and the change is noted in the parcel's history.
          </p>
        )}
        {errors.speciesId && <p role="alert" className="field-error">{errors.speciesId.message}</p>}
      </div>

      <fieldset>
        <legend className="field-label">Season (month-day, every year; an end before the start crosses New Year)</legend>
        {seasons.fields.map((field, i) => (
          <div key={field.id} className="mt-2 flex flex-wrap items-end gap-2">
            <label className="text-sm">From <input aria-label={`Season ${i + 1} start`} placeholder="11-01" className="field-input w-28" {...register(`seasons.${i}.start`)} /></label>
            <label className="text-sm">to <input aria-label={`Season ${i + 1} end`} placeholder="03-15" className="field-input w-28" {...register(`seasons.${i}.end`)} /></label>
            {seasons.fields.length > 1 && <button type="button" className="button-quiet" onClick={() => seasons.remove(i)}>Remove</button>}
            {(errors.seasons?.[i]?.start || errors.seasons?.[i]?.end) && (
              <p role="alert" className="field-error w-full">{errors.seasons?.[i]?.start?.message ?? errors.seasons?.[i]?.end?.message}</p>
            )}
          </div>
        ))}
        {seasons.fields.length < 4 && <button type="button" className="button-quiet mt-2" onClick={() => seasons.append({ start: '', end: '' })}>Add a window</button>}
        {errors.seasons?.message && <p role="alert" className="field-error">{errors.seasons.message}</p>}
      </fieldset>

      <fieldset>
        <legend className="field-label">Methods allowed</legend>
        <div className="mt-1 flex flex-wrap gap-3">
          {methods.map((m) => (
            <label key={m} className="flex items-center gap-1 text-sm"><input type="checkbox" value={m} className="accent-moss-600" {...register('methods')} /> {methodLabels[m]}</label>
          ))}
        </div>
        {errors.methods && <p role="alert" className="field-error">{errors.methods.message}</p>}
      </fieldset>

      <fieldset>
        <legend className="field-label">Limits</legend>
        <p className="text-xs text-loam-700">
          A species may be limited in two kinds of quantity, such as grams and a number of plants: whichever is reached first applies, and
          foragers record both. While entries of the species count in a season that has not ended, its limits keep counting the same kinds of
          quantity (so no tally starts again from nothing); amounts, seasons and methods can change at any time. Liquid and dry pints and
          quarts are different volumes.
        </p>
        {limits.fields.map((field, i) => (
          <div key={field.id} className="mt-2 grid grid-cols-[minmax(0,7rem)_minmax(0,1fr)] items-end gap-2 sm:flex sm:flex-wrap" data-testid="limit-row">
            <input aria-label={`Limit ${i + 1} quantity`} inputMode="decimal" placeholder="500" className="field-input sm:w-28" {...register(`limits.${i}.quantity`)} />
            <select aria-label={`Limit ${i + 1} unit`} className="field-input sm:w-44" {...register(`limits.${i}.unit`)}>
              {unitCodes.map((u) => <option key={u} value={u}>{units[u].label}</option>)}
            </select>
            <select aria-label={`Limit ${i + 1} scope`} className="field-input col-span-2 sm:w-auto sm:min-w-[15rem]" {...register(`limits.${i}.scope`)}>
              {parcelLimitScopes.map((s) => <option key={s} value={s}>{scopeLabels[s]}</option>)}
            </select>
            <button type="button" className="button-quiet col-span-2 justify-self-start" onClick={() => limits.remove(i)}>Remove</button>
            {errors.limits?.[i]?.quantity && <p role="alert" className="field-error col-span-2 w-full">{errors.limits[i]?.quantity?.message}</p>}
          </div>
        ))}
        {limits.fields.length < 8 && (
          <button type="button" className="button-quiet mt-2" onClick={() => limits.append({ scope: 'day', quantity: '', unit: 'g' })}>Add a limit</button>
        )}
        {(errors.limits?.message ?? errors.limits?.root?.message) && <p role="alert" className="field-error">{errors.limits?.message ?? errors.limits?.root?.message}</p>}
      </fieldset>
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <button type="submit" className="button" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : target ? 'Save changes' : 'Save allowance'}</button>
    </form>
  );
}
