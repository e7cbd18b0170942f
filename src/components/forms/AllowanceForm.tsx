import { zodResolver } from '@hookform/resolvers/zod';
import { useFieldArray, useForm } from 'react-hook-form';
import type { z } from 'zod';
import { allowanceSchema, methods, parcelLimitScopes } from '../../lib/land.schemas';
import { unitCodes, units } from '../../lib/units';
import { sendJson } from '../api-client';

type Input = z.input<typeof allowanceSchema>;
type Output = z.output<typeof allowanceSchema>;

const scopeLabels: Record<(typeof parcelLimitScopes)[number], string> = {
  visit: 'per visit',
  day: 'per day (local calendar day)',
  season: 'per forager per season',
  'parcel-season': 'parcel-wide per season (everyone)',
};
const methodLabels: Record<(typeof methods)[number], string> = {
  cut: 'cut above ground', pick: 'pick', dig: 'dig roots or bulbs', strip: 'strip bark', 'gather-fallen': 'gather fallen',
};

/** The harvest terms of one species: season windows (may cross New Year), methods, limits. */
export default function AllowanceForm({ action, species, initial }: { action: string; species: { id: string; name: string; usualUnit: string }[]; initial?: Input }) {
  const { register, control, handleSubmit, setError, formState } = useForm<Input, unknown, Output>({
    resolver: zodResolver(allowanceSchema),
    defaultValues: initial ?? { speciesId: species[0]?.id ?? '', seasons: [{ start: '', end: '' }], methods: [], limits: [{ scope: 'visit', quantity: '', unit: (species[0]?.usualUnit ?? 'g') as Input['limits'][number]['unit'] }] },
  });
  const seasons = useFieldArray({ control, name: 'seasons' });
  const limits = useFieldArray({ control, name: 'limits' });
  const { errors, isSubmitting } = formState;

  const onSubmit = handleSubmit(async (input) => {
    const result = await sendJson('PUT', action, input);
    if (result.ok) return window.location.reload();
    const field = result.error.field;
    setError(field === 'speciesId' ? 'speciesId' : field?.startsWith('limits') ? 'limits' : 'root', { message: result.error.message });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4" data-hydrated="true" data-testid="allowance-form">
      <div>
        <label htmlFor="allowance-species" className="field-label">Species</label>
        <select id="allowance-species" className="field-input" {...register('speciesId')}>
          {species.map((s) => <option key={s.id} value={s.id}>{s.name}</option>)}
        </select>
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
        <p className="text-xs text-loam-700" id="allowance-limits-help">
          A species may be limited in two kinds of quantity, such as grams and a number of plants: whichever is reached first applies, and
          foragers record both. While entries of the species count in a season that has not ended, its limits keep counting the same kinds of
          quantity (so no tally starts again from nothing); amounts, seasons and methods can change at any time. Liquid and dry pints and
          quarts are different volumes.
        </p>
        {limits.fields.map((field, i) => (
          <div key={field.id} className="mt-2 flex flex-wrap items-end gap-2">
            <input aria-label={`Limit ${i + 1} quantity`} inputMode="decimal" placeholder="500" className="field-input w-28" {...register(`limits.${i}.quantity`)} />
            <select aria-label={`Limit ${i + 1} unit`} className="field-input w-40" {...register(`limits.${i}.unit`)}>
              {unitCodes.map((u) => <option key={u} value={u}>{units[u].label}</option>)}
            </select>
            <select aria-label={`Limit ${i + 1} scope`} className="field-input w-64" {...register(`limits.${i}.scope`)}>
              {parcelLimitScopes.map((s) => <option key={s} value={s}>{scopeLabels[s]}</option>)}
            </select>
            <button type="button" className="button-quiet" onClick={() => limits.remove(i)}>Remove</button>
            {errors.limits?.[i]?.quantity && <p role="alert" className="field-error w-full">{errors.limits[i]?.quantity?.message}</p>}
          </div>
        ))}
        {limits.fields.length < 8 && (
          <button type="button" className="button-quiet mt-2" onClick={() => limits.append({ scope: 'day', quantity: '', unit: 'g' })}>Add a limit</button>
        )}
        {(errors.limits?.message ?? errors.limits?.root?.message) && <p role="alert" className="field-error">{errors.limits?.message ?? errors.limits?.root?.message}</p>}
      </fieldset>
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <button type="submit" className="button" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : 'Save allowance'}</button>
    </form>
  );
}
