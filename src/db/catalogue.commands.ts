import { and, asc, desc, eq, inArray, isNull, like, or, sql } from 'drizzle-orm';
import { speciesChanges, slugFor, type SpeciesChange, type SpeciesRecord } from '../lib/catalogue';
import type { SpeciesInput } from '../lib/catalogue.schemas';
import type { Executor, Tx } from './client';
import { allowances, auditEvents, species, speciesCautions, users } from './schema';

/**
 * The admin's upkeep of the catalogue. Every function takes the admin's id and does nothing (answers
 * null) unless that account is an admin: the check is in the query, not only in the endpoint.
 */

async function isAdmin(db: Executor, adminId: string) {
  const [row] = await db.select({ id: users.id }).from(users).where(and(eq(users.id, adminId), sql`'admin' = any(${users.roles})`));
  return row !== undefined;
}

type CautionRow = { speciesId: string; text: string; sourceTitle: string; sourceUrl: string | null };

/** Every species with its cautions and their sources, by common name; retired ones too, marked. */
export async function listCatalogue(db: Executor) {
  const [rows, cautions] = await Promise.all([
    db.select().from(species).orderBy(asc(species.commonName)),
    db
      .select({ speciesId: speciesCautions.speciesId, text: speciesCautions.text, sourceTitle: speciesCautions.sourceTitle, sourceUrl: speciesCautions.sourceUrl })
      .from(speciesCautions)
      .orderBy(asc(speciesCautions.position), asc(speciesCautions.id)),
  ]);
  const bySpecies = new Map<string, CautionRow[]>();
  for (const c of cautions) bySpecies.set(c.speciesId, [...(bySpecies.get(c.speciesId) ?? []), c]);
  return rows.map((s) => ({
    ...s,
    // A species written straight into the table (as some tests do) has cautions without rows: shown without a source.
    cautionSources: bySpecies.get(s.id) ?? s.cautions.map((text) => ({ speciesId: s.id, text, sourceTitle: '', sourceUrl: null })),
  }));
}

export type CatalogueSpecies = Awaited<ReturnType<typeof listCatalogue>>[number];

async function recordOf(tx: Tx, speciesId: string): Promise<SpeciesRecord | null> {
  const [row] = await tx.select().from(species).where(eq(species.id, speciesId)).for('update');
  if (!row) return null;
  const cautions = await tx
    .select({ text: speciesCautions.text, sourceTitle: speciesCautions.sourceTitle, sourceUrl: speciesCautions.sourceUrl })
    .from(speciesCautions)
    .where(eq(speciesCautions.speciesId, speciesId))
    .orderBy(asc(speciesCautions.position), asc(speciesCautions.id));
  return {
    commonName: row.commonName,
    scientificName: row.scientificName,
    kind: row.kind,
    usualUnit: row.usualUnit,
    usualMethods: row.usualMethods,
    cautions,
    lookalikes: row.lookalikes,
    protectedStatus: row.protectedStatus,
  };
}

async function writeCautions(tx: Tx, speciesId: string, cautions: SpeciesInput['cautions']) {
  await tx.delete(speciesCautions).where(eq(speciesCautions.speciesId, speciesId));
  if (cautions.length) {
    await tx.insert(speciesCautions).values(cautions.map((c, i) => ({ speciesId, position: i + 1, text: c.text, sourceTitle: c.sourceTitle, sourceUrl: c.sourceUrl })));
  }
}

async function freeSlug(tx: Tx, commonName: string) {
  const base = slugFor(commonName);
  const taken = new Set((await tx.select({ slug: species.slug }).from(species).where(or(eq(species.slug, base), like(species.slug, `${base}-%`)))).map((r) => r.slug));
  let slug = base;
  for (let n = 2; taken.has(slug); n += 1) slug = `${base}-${n}`;
  return slug;
}

const fieldsOf = (input: SpeciesInput) => ({
  commonName: input.commonName,
  scientificName: input.scientificName,
  kind: input.kind,
  usualUnit: input.usualUnit,
  usualMethods: input.usualMethods,
  lookalikes: input.lookalikes,
  protectedStatus: input.protectedStatus,
});

/** Adds a species with its cautions; null unless `adminId` is an admin. */
export async function addSpecies(db: Executor, { adminId, input, now }: { adminId: string; input: SpeciesInput; now: Date }) {
  return db.transaction(async (tx) => {
    if (!(await isAdmin(tx, adminId))) return null;
    const slug = await freeSlug(tx, input.commonName);
    const [row] = await tx.insert(species).values({ slug, ...fieldsOf(input), createdAt: now, updatedAt: now }).returning({ id: species.id, slug: species.slug });
    if (!row) return null;
    await writeCautions(tx, row.id, input.cautions);
    await tx.insert(auditEvents).values({ actorId: adminId, action: 'species.added', subjectType: 'species', subjectId: row.id, detail: { commonName: input.commonName, cautions: input.cautions.length }, at: now });
    return row;
  });
}

/** Changes a species and its cautions, recording what changed; null unless the species exists and `adminId` is an admin. */
export async function editSpecies(db: Executor, { speciesId, adminId, input, now }: { speciesId: string; adminId: string; input: SpeciesInput; now: Date }) {
  return db.transaction(async (tx) => {
    if (!(await isAdmin(tx, adminId))) return null;
    const before = await recordOf(tx, speciesId);
    if (!before) return null;
    const changes = speciesChanges(before, { ...fieldsOf(input), cautions: input.cautions });
    if (changes.length === 0) return { id: speciesId, changes };
    await tx.update(species).set({ ...fieldsOf(input), updatedAt: now }).where(eq(species.id, speciesId));
    await writeCautions(tx, speciesId, input.cautions);
    await tx.insert(auditEvents).values({ actorId: adminId, action: 'species.edited', subjectType: 'species', subjectId: speciesId, detail: { changes }, at: now });
    return { id: speciesId, changes };
  });
}

/**
 * Retires a species (kept on the allowances and entries that name it, offered for no new allowance)
 * or brings it back; null unless it exists and `adminId` is an admin. Doing what is already so records nothing.
 */
export async function setSpeciesRetired(db: Executor, { speciesId, adminId, retired, now }: { speciesId: string; adminId: string; retired: boolean; now: Date }) {
  return db.transaction(async (tx) => {
    if (!(await isAdmin(tx, adminId))) return null;
    const [row] = await tx.select({ id: species.id, retiredAt: species.retiredAt }).from(species).where(eq(species.id, speciesId)).for('update');
    if (!row) return null;
    if ((row.retiredAt !== null) === retired) return { id: row.id, retired, changed: false };
    await tx.update(species).set(retired ? { retiredAt: now, retiredBy: adminId, updatedAt: now } : { retiredAt: null, retiredBy: null, updatedAt: now }).where(eq(species.id, speciesId));
    await tx.insert(auditEvents).values({ actorId: adminId, action: retired ? 'species.retired' : 'species.restored', subjectType: 'species', subjectId: speciesId, detail: {}, at: now });
    return { id: row.id, retired, changed: true };
  });
}

export type SpeciesHistoryEvent = { id: string; subjectId: string; action: string; at: Date; actorName: string | null; actorEmail: string | null; changes: SpeciesChange[] };

/** The changes made to species, newest first (all of them, or of the ones named); null unless `adminId` is an admin. */
export async function speciesHistory(db: Executor, { adminId, speciesIds }: { adminId: string; speciesIds?: string[] }): Promise<SpeciesHistoryEvent[] | null> {
  if (!(await isAdmin(db, adminId))) return null;
  const rows = await db
    .select({ id: auditEvents.id, subjectId: auditEvents.subjectId, action: auditEvents.action, at: auditEvents.at, detail: auditEvents.detail, actorName: users.name, actorEmail: users.email })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .where(and(eq(auditEvents.subjectType, 'species'), speciesIds ? inArray(auditEvents.subjectId, speciesIds.length ? speciesIds : ['']) : undefined))
    .orderBy(desc(auditEvents.at), desc(auditEvents.id));
  return rows.map((r) => ({ id: r.id, subjectId: r.subjectId, action: r.action, at: r.at, actorName: r.actorName, actorEmail: r.actorEmail, changes: (r.detail.changes as SpeciesChange[] | undefined) ?? [] }));
}

/** Species a landowner may put in a new allowance: those not retired, plus any the parcel already allows. */
export function offeredForAllowance<T extends { id: string; retiredAt: Date | null }>(all: T[], allowedSpeciesIds: string[]): T[] {
  return all.filter((s) => s.retiredAt === null || allowedSpeciesIds.includes(s.id));
}

/** How many parcels allow a species now (allowances not removed). */
export async function countAllowancesNaming(db: Executor, { speciesId }: { speciesId: string }) {
  const [row] = await db.select({ n: sql<number>`count(*)::int` }).from(allowances).where(and(eq(allowances.speciesId, speciesId), isNull(allowances.removedAt)));
  return { active: row?.n ?? 0 };
}
