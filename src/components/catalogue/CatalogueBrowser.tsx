import { useEffect, useMemo, useState } from 'react';
import { matchesFilter, worstDanger, type CatalogueFilter } from '../../lib/catalogue';

export type BrowserSpecies = {
  id: string;
  slug: string;
  commonName: string;
  scientificName: string;
  kind: string;
  usualMethods: string[];
  cautions: { text: string; sourceTitle: string; sourceUrl: string | null }[];
  lookalikes: { commonName: string; scientificName: string; danger: string; howToTell: string }[];
  protectedStatus: string | null;
  retired: boolean;
};

const dangerWords: Record<string, string> = { deadly: 'Deadly', toxic: 'Toxic', inedible: 'Inedible' };
const cautionChoices: { value: CatalogueFilter['caution']; label: string }[] = [
  { value: 'any', label: 'Any' },
  { value: 'deadly', label: 'Has a deadly lookalike' },
  { value: 'toxic', label: 'Has a deadly or toxic lookalike' },
  { value: 'protected', label: 'Protected' },
];
const methodWords: Record<string, string> = { cut: 'cut', pick: 'pick', dig: 'dig', strip: 'strip', 'gather-fallen': 'gather fallen' };

/** The filter as the page's address carries it, so a search can be linked and works as a plain GET form. */
function toSearch(filter: CatalogueFilter): string {
  const params = new URLSearchParams();
  if (filter.query) params.set('q', filter.query);
  if (filter.kind) params.set('kind', filter.kind);
  if (filter.caution !== 'any') params.set('caution', filter.caution);
  if (filter.method) params.set('method', filter.method);
  if (filter.includeRetired) params.set('retired', '1');
  const text = params.toString();
  return text ? `?${text}` : '';
}

/**
 * The catalogue: search by common or scientific name and narrow by kind, lookalike danger and method,
 * without reloading the page. Each species shows its name and warnings; its cautions and lookalikes
 * open on demand. Without JavaScript the same controls are a GET form the server answers.
 */
export default function CatalogueBrowser({ species, initial, editable }: { species: BrowserSpecies[]; initial: CatalogueFilter; editable: boolean }) {
  const [filter, setFilter] = useState<CatalogueFilter>(initial);
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);
  useEffect(() => {
    if (hydrated) window.history.replaceState(null, '', `${window.location.pathname}${toSearch(filter)}`);
  }, [filter, hydrated]);
  const kinds = useMemo(() => [...new Set(species.map((s) => s.kind))].sort(), [species]);
  const usedMethods = useMemo(() => [...new Set(species.flatMap((s) => s.usualMethods))].sort(), [species]);
  const shown = species.filter((s) => matchesFilter(s, filter));
  const total = filter.includeRetired ? species.length : species.filter((s) => !s.retired).length;
  const anyRetired = species.some((s) => s.retired);
  const set = (patch: Partial<CatalogueFilter>) => setFilter((f) => ({ ...f, ...patch }));

  return (
    <div data-hydrated={hydrated ? 'true' : undefined}>
      <form
        method="get"
        action="/catalogue"
        role="search"
        aria-label="Search the catalogue"
        className="card grid grid-cols-2 gap-3 p-4 lg:grid-cols-5"
        onSubmit={(event) => event.preventDefault()}
      >
        <div className="col-span-2">
          <label htmlFor="catalogue-q" className="field-label">Search by name</label>
          <input
            id="catalogue-q"
            name="q"
            type="search"
            className="field-input"
            placeholder="chanterelle, Morchella …"
            value={filter.query}
            onChange={(e) => set({ query: e.target.value })}
          />
        </div>
        <div>
          <label htmlFor="catalogue-kind" className="field-label">Kind</label>
          <select id="catalogue-kind" name="kind" className="field-input" value={filter.kind} onChange={(e) => set({ kind: e.target.value })}>
            <option value="">All kinds</option>
            {kinds.map((k) => <option key={k} value={k}>{k}</option>)}
          </select>
        </div>
        <div>
          <label htmlFor="catalogue-caution" className="field-label">Cautions</label>
          <select id="catalogue-caution" name="caution" className="field-input" value={filter.caution} onChange={(e) => set({ caution: e.target.value as CatalogueFilter['caution'] })}>
            {cautionChoices.map((c) => <option key={c.value} value={c.value}>{c.label}</option>)}
          </select>
        </div>
        <div className="col-span-2 lg:col-span-1">
          <label htmlFor="catalogue-method" className="field-label">Usual method</label>
          <select id="catalogue-method" name="method" className="field-input" value={filter.method} onChange={(e) => set({ method: e.target.value })}>
            <option value="">Any method</option>
            {usedMethods.map((m) => <option key={m} value={m}>{methodWords[m] ?? m}</option>)}
          </select>
        </div>
        <div className="col-span-2 flex flex-wrap items-center gap-3 lg:col-span-5">
          {anyRetired && (
            <label className="flex items-center gap-2 text-sm">
              <input type="checkbox" name="retired" value="1" className="h-4 w-4 accent-moss-600" checked={filter.includeRetired} onChange={(e) => set({ includeRetired: e.target.checked })} />
              Show retired species
            </label>
          )}
          <p className="text-sm text-loam-700" role="status" data-testid="catalogue-count">
            {shown.length === total ? `All ${total} species` : `${shown.length} of ${total} species`}
          </p>
          {!hydrated && <button type="submit" className="button-quiet">Search</button>}
        </div>
      </form>

      {shown.length === 0 && <p className="mt-6 text-loam-700">No species match. Try fewer words, or another kind.</p>}
      <ul className="mt-4 grid items-start gap-3 md:grid-cols-2" aria-label="Species">
        {shown.map((s) => <SpeciesCard key={s.id} species={s} editable={editable} />)}
      </ul>
    </div>
  );
}

/** Where a caution comes from; said once under the list when every caution of the species has the same source. */
function Source({ caution, all = false }: { caution: BrowserSpecies['cautions'][number]; all?: boolean }) {
  const title = caution.sourceUrl ? <a href={caution.sourceUrl} rel="noopener noreferrer" target="_blank">{caution.sourceTitle}</a> : caution.sourceTitle;
  return <span className={`block text-xs text-loam-700 ${all ? 'mt-2' : ''}`}>{all ? 'Source of these cautions' : 'Source'}: {title}</span>;
}

function SpeciesCard({ species: s, editable }: { species: BrowserSpecies; editable: boolean }) {
  const danger = worstDanger(s);
  const [firstCaution] = s.cautions;
  const oneSource = s.cautions.length > 1 && firstCaution?.sourceTitle && s.cautions.every((c) => c.sourceTitle === firstCaution.sourceTitle && c.sourceUrl === firstCaution.sourceUrl) ? firstCaution : null;
  return (
    <li className="card p-4" id={s.slug} data-testid="species-card">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 className="min-w-0 break-words">{s.commonName}</h2>
        <span className="flex flex-wrap gap-1">
          <span className="pill border-loam-300 text-loam-700">{s.kind}</span>
          {danger && danger !== 'inedible' && <span className="pill border-ember-500 bg-ember-50 text-ember-700">{dangerWords[danger]} lookalike</span>}
          {s.protectedStatus && <span className="pill border-moss-300 bg-lichen-100 text-moss-800">Protected</span>}
          {s.retired && <span className="pill border-loam-400 bg-loam-100 text-loam-800">Retired</span>}
        </span>
      </div>
      <p className="text-sm italic text-loam-700">{s.scientificName}</p>
      <details className="mt-2">
        <summary className="cursor-pointer text-sm font-semibold text-ember-700">
          Cautions ({s.cautions.length}){s.lookalikes.length > 0 ? ` and lookalikes (${s.lookalikes.length})` : ''}
        </summary>
        <ul className="mt-2 list-disc space-y-2 pl-5 text-sm">
          {s.cautions.map((c, i) => (
            <li key={i}>
              {c.text}
              {!oneSource && c.sourceTitle && <Source caution={c} />}
            </li>
          ))}
        </ul>
        {oneSource && <Source caution={oneSource} all />}
        {s.lookalikes.length > 0 && (
          <div className="mt-3">
            <p className="text-sm font-semibold text-ember-700">Lookalikes</p>
            <ul className="mt-1 space-y-1 text-sm">
              {s.lookalikes.map((l) => (
                <li key={l.scientificName}><strong>{dangerWords[l.danger] ?? l.danger}:</strong> {l.commonName} (<em>{l.scientificName}</em>). {l.howToTell}</li>
              ))}
            </ul>
          </div>
        )}
        {s.protectedStatus && <p className="mt-3 rounded bg-lichen-100 px-3 py-2 text-sm"><strong>Protected:</strong> {s.protectedStatus}</p>}
      </details>
      {editable && <p className="mt-2 text-sm"><a href={`/catalogue/species/${s.id}`}>Edit {s.commonName}</a></p>}
    </li>
  );
}
