import { zodResolver } from '@hookform/resolvers/zod';
import { useFieldArray, useForm, type FieldPath } from 'react-hook-form';
import { lookalikeDangers, speciesKinds, speciesSchema, type SpeciesFormInput, type SpeciesInput } from '../../lib/catalogue.schemas';
import { methods } from '../../lib/land.schemas';
import { unitCodes, units } from '../../lib/units';
import { sendJson } from '../api-client';
import { useHydrated } from '../useHydrated';

const methodLabels: Record<(typeof methods)[number], string> = {
  cut: 'cut above ground', pick: 'pick', dig: 'dig roots or bulbs', strip: 'strip bark', 'gather-fallen': 'gather fallen',
};

const blank: SpeciesFormInput = {
  commonName: '', scientificName: '', kind: 'mushroom', usualUnit: 'g', usualMethods: [],
  cautions: [{ text: '', sourceTitle: '', sourceUrl: '' }], lookalikes: [], protectedStatus: '',
};

/** The admin's form for a species and its cautions, each with its source. Adds a species, or changes one (`speciesId`). */
export default function SpeciesForm({ speciesId, initial }: { speciesId?: string; initial?: SpeciesFormInput }) {
  const hydrated = useHydrated();
  const { register, control, handleSubmit, setError, formState } = useForm<SpeciesFormInput, unknown, SpeciesInput>({
    resolver: zodResolver(speciesSchema),
    defaultValues: initial ?? blank,
  });
  const cautions = useFieldArray({ control, name: 'cautions' });
  const lookalikes = useFieldArray({ control, name: 'lookalikes' });
  const { errors, isSubmitting } = formState;

  const onSubmit = handleSubmit(async (input) => {
    const result = speciesId ? await sendJson('PUT', `/api/species/${speciesId}`, input) : await sendJson('POST', '/api/species', input);
    if (result.ok) {
      const id = speciesId ?? (result.data as { species: { id: string } }).species.id;
      return window.location.assign(`/catalogue/species/${id}?saved=1`);
    }
    const field = result.error.field;
    setError(field && field !== 'body' ? (field as FieldPath<SpeciesFormInput>) : 'root', { message: result.error.message });
  });

  const fieldError = (message: string | undefined) => message && <p role="alert" className="field-error">{message}</p>;

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5" data-hydrated={hydrated ? 'true' : undefined} data-testid="species-form">
      <div className="grid gap-4 sm:grid-cols-2">
        <div>
          <label htmlFor="species-common" className="field-label">Common name</label>
          <input id="species-common" className="field-input" aria-invalid={errors.commonName ? 'true' : 'false'} {...register('commonName')} />
          {fieldError(errors.commonName?.message)}
        </div>
        <div>
          <label htmlFor="species-scientific" className="field-label">Scientific name</label>
          <input id="species-scientific" className="field-input italic" aria-invalid={errors.scientificName ? 'true' : 'false'} {...register('scientificName')} />
          {fieldError(errors.scientificName?.message)}
        </div>
        <div>
          <label htmlFor="species-kind" className="field-label">Kind</label>
          <select id="species-kind" className="field-input" {...register('kind')}>
            {speciesKinds.map((k) => <option key={k} value={k}>{k}</option>)}
          </select>
          {fieldError(errors.kind?.message)}
        </div>
        <div>
          <label htmlFor="species-unit" className="field-label">Usual unit</label>
          <select id="species-unit" className="field-input" {...register('usualUnit')}>
            {unitCodes.map((u) => <option key={u} value={u}>{units[u].label}</option>)}
          </select>
          {fieldError(errors.usualUnit?.message)}
        </div>
      </div>

      <fieldset>
        <legend className="field-label">Usual methods</legend>
        <div className="mt-1 flex flex-wrap gap-3">
          {methods.map((m) => (
            <label key={m} className="flex items-center gap-1 text-sm"><input type="checkbox" value={m} className="accent-moss-600" {...register('usualMethods')} /> {methodLabels[m]}</label>
          ))}
        </div>
      </fieldset>

      <fieldset>
        <legend className="field-label">Cautions</legend>
        <p className="text-xs text-loam-700">Foragers see these in the catalogue and at check-in. Name the source of each: a field guide, a paper or a web page.</p>
        {cautions.fields.map((field, i) => (
          <div key={field.id} className="mt-3 space-y-2 rounded-md border border-loam-200 p-3" data-testid="caution-editor">
            <div>
              <label htmlFor={`caution-${i}-text`} className="field-label">Caution {i + 1}</label>
              <textarea id={`caution-${i}-text`} rows={2} className="field-input" {...register(`cautions.${i}.text`)} />
              {fieldError(errors.cautions?.[i]?.text?.message)}
            </div>
            <div className="grid gap-2 sm:grid-cols-2">
              <div>
                <label htmlFor={`caution-${i}-source`} className="field-label">Source of caution {i + 1}</label>
                <input id={`caution-${i}-source`} className="field-input" placeholder="Author, title, year" {...register(`cautions.${i}.sourceTitle`)} />
                {fieldError(errors.cautions?.[i]?.sourceTitle?.message)}
              </div>
              <div>
                <label htmlFor={`caution-${i}-url`} className="field-label">Web address of the source (optional)</label>
                <input id={`caution-${i}-url`} type="url" inputMode="url" className="field-input" placeholder="https://…" {...register(`cautions.${i}.sourceUrl`)} />
                {fieldError(errors.cautions?.[i]?.sourceUrl?.message)}
              </div>
            </div>
            {cautions.fields.length > 1 && <button type="button" className="button-quiet" onClick={() => cautions.remove(i)}>Remove caution {i + 1}</button>}
          </div>
        ))}
        {cautions.fields.length < 20 && (
          <button type="button" className="button-quiet mt-3" onClick={() => cautions.append({ text: '', sourceTitle: '', sourceUrl: '' })}>Add a caution</button>
        )}
        {fieldError(errors.cautions?.message ?? errors.cautions?.root?.message)}
      </fieldset>

      <fieldset>
        <legend className="field-label">Lookalikes</legend>
        {lookalikes.fields.map((field, i) => (
          <div key={field.id} className="mt-3 grid gap-2 rounded-md border border-loam-200 p-3 sm:grid-cols-3">
            <div>
              <label htmlFor={`lookalike-${i}-common`} className="field-label">Lookalike {i + 1}</label>
              <input id={`lookalike-${i}-common`} className="field-input" {...register(`lookalikes.${i}.commonName`)} />
              {fieldError(errors.lookalikes?.[i]?.commonName?.message)}
            </div>
            <div>
              <label htmlFor={`lookalike-${i}-scientific`} className="field-label">Its scientific name</label>
              <input id={`lookalike-${i}-scientific`} className="field-input italic" {...register(`lookalikes.${i}.scientificName`)} />
              {fieldError(errors.lookalikes?.[i]?.scientificName?.message)}
            </div>
            <div>
              <label htmlFor={`lookalike-${i}-danger`} className="field-label">Danger</label>
              <select id={`lookalike-${i}-danger`} className="field-input" {...register(`lookalikes.${i}.danger`)}>
                {lookalikeDangers.map((d) => <option key={d} value={d}>{d}</option>)}
              </select>
            </div>
            <div className="sm:col-span-3">
              <label htmlFor={`lookalike-${i}-tell`} className="field-label">How to tell them apart</label>
              <textarea id={`lookalike-${i}-tell`} rows={2} className="field-input" {...register(`lookalikes.${i}.howToTell`)} />
              {fieldError(errors.lookalikes?.[i]?.howToTell?.message)}
            </div>
            <div><button type="button" className="button-quiet" onClick={() => lookalikes.remove(i)}>Remove lookalike {i + 1}</button></div>
          </div>
        ))}
        {lookalikes.fields.length < 20 && (
          <button type="button" className="button-quiet mt-3" onClick={() => lookalikes.append({ commonName: '', scientificName: '', danger: 'toxic', howToTell: '' })}>Add a lookalike</button>
        )}
      </fieldset>

      <div>
        <label htmlFor="species-protected" className="field-label">Protected status (optional)</label>
        <input id="species-protected" className="field-input" placeholder="Where and how the law protects it" {...register('protectedStatus')} />
        {fieldError(errors.protectedStatus?.message)}
      </div>

      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <button type="submit" className="button" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : speciesId ? 'Save changes' : 'Add the species'}</button>
    </form>
  );
}
