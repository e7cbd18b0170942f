/** The catalogue's search and filters: pure, so the page and its tests agree on what matches. */

export type CatalogueFilter = { query: string; kind: string; caution: 'any' | 'deadly' | 'toxic' | 'protected'; method: string; includeRetired: boolean };

export type CatalogueItem = {
  commonName: string;
  scientificName: string;
  kind: string;
  usualMethods: string[];
  lookalikes: { commonName: string; scientificName: string; danger: string }[];
  protectedStatus: string | null;
  retired: boolean;
};

export const emptyFilter: CatalogueFilter = { query: '', kind: '', caution: 'any', method: '', includeRetired: false };

/** Lower case without accents, so "cepe" finds "Cèpe". */
export function foldText(text: string): string {
  return text.normalize('NFD').replace(/\p{Diacritic}/gu, '').toLowerCase();
}

/** The worst danger among a species' lookalikes, or null when it has none. */
export function worstDanger(item: Pick<CatalogueItem, 'lookalikes'>): 'deadly' | 'toxic' | 'inedible' | null {
  const dangers = item.lookalikes.map((l) => l.danger);
  if (dangers.includes('deadly')) return 'deadly';
  if (dangers.includes('toxic')) return 'toxic';
  if (dangers.includes('inedible')) return 'inedible';
  return null;
}

/**
 * Whether a species matches: every word of the query is in its common or scientific name (or a
 * lookalike's, so a search for a poisonous plant finds what it is mistaken for), and every filter holds.
 */
export function matchesFilter(item: CatalogueItem, filter: CatalogueFilter): boolean {
  if (item.retired && !filter.includeRetired) return false;
  if (filter.kind && item.kind !== filter.kind) return false;
  if (filter.method && !item.usualMethods.includes(filter.method)) return false;
  if (filter.caution === 'deadly' && worstDanger(item) !== 'deadly') return false;
  if (filter.caution === 'toxic' && !['deadly', 'toxic'].includes(worstDanger(item) ?? '')) return false;
  if (filter.caution === 'protected' && !item.protectedStatus) return false;
  const words = foldText(filter.query).split(/\s+/).filter(Boolean);
  if (words.length === 0) return true;
  const haystack = foldText([item.commonName, item.scientificName, ...item.lookalikes.flatMap((l) => [l.commonName, l.scientificName])].join(' '));
  return words.every((word) => haystack.includes(word));
}

/** What the admin's form edits of a species, as stored; `speciesChanges` compares two of them. */
export type SpeciesRecord = {
  commonName: string;
  scientificName: string;
  kind: string;
  usualUnit: string;
  usualMethods: string[];
  cautions: { text: string; sourceTitle: string; sourceUrl: string | null }[];
  lookalikes: { commonName: string; scientificName: string; danger: string; howToTell: string }[];
  protectedStatus: string | null;
};

/** One line of a species' history: a field set from one value to another, or list items added and removed. */
export type SpeciesChange =
  | { field: 'commonName' | 'scientificName' | 'kind' | 'usualUnit' | 'protectedStatus'; before: string | null; after: string | null }
  | { field: 'usualMethods' | 'cautions' | 'lookalikes'; added: string[]; removed: string[] };

const scalarFields = ['commonName', 'scientificName', 'kind', 'usualUnit', 'protectedStatus'] as const;

export const cautionLine = (c: SpeciesRecord['cautions'][number]) => `${c.text} (source: ${c.sourceTitle}${c.sourceUrl ? `, ${c.sourceUrl}` : ''})`;
const lookalikeLine = (l: SpeciesRecord['lookalikes'][number]) => `${l.commonName} (${l.scientificName}), ${l.danger}: ${l.howToTell}`;

function listChange(field: 'usualMethods' | 'cautions' | 'lookalikes', before: string[], after: string[]): SpeciesChange | null {
  const added = after.filter((line) => !before.includes(line));
  const removed = before.filter((line) => !after.includes(line));
  return added.length || removed.length ? { field, added, removed } : null;
}

/** What changed between two versions of a species, field by field; empty when nothing did. */
export function speciesChanges(before: SpeciesRecord, after: SpeciesRecord): SpeciesChange[] {
  const changes: SpeciesChange[] = [];
  for (const field of scalarFields) {
    if ((before[field] ?? null) !== (after[field] ?? null)) changes.push({ field, before: before[field] ?? null, after: after[field] ?? null });
  }
  const lists = [
    listChange('usualMethods', before.usualMethods, after.usualMethods),
    listChange('cautions', before.cautions.map(cautionLine), after.cautions.map(cautionLine)),
    listChange('lookalikes', before.lookalikes.map(lookalikeLine), after.lookalikes.map(lookalikeLine)),
  ];
  return [...changes, ...lists.filter((c): c is SpeciesChange => c !== null)];
}

export const speciesFieldWords: Record<SpeciesChange['field'], string> = {
  commonName: 'Common name',
  scientificName: 'Scientific name',
  kind: 'Kind',
  usualUnit: 'Usual unit',
  protectedStatus: 'Protected status',
  usualMethods: 'Usual methods',
  cautions: 'Cautions',
  lookalikes: 'Lookalikes',
};

/** A slug for a new species' anchor on the catalogue page: its common name in lower-case words. */
export function slugFor(commonName: string): string {
  return foldText(commonName).replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '').slice(0, 80) || 'species';
}
