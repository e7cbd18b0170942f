import { and, asc, desc, eq, isNull, sql } from 'drizzle-orm';
import { formatDay } from '../lib/field/words';
import { AppError, invalidInput, notFound } from '../lib/errors';
import { describeAllowance, describeAllowanceChanges } from '../lib/allowance-changes';
import { localDate } from '../lib/local-time';
import { measureOf, unitsOfMeasure, type Measure, type Unit } from '../lib/units';
import type { AllowanceInput, BoundaryGeometry } from '../lib/land.schemas';
import type { Executor } from './client';
import { recordParcelChange } from './parcel-history.queries';
import { allowances, closures, hazards, limits, noHarvestZones, parcels, species, terms } from './schema';

/**
 * The rules a landowner keeps on a parcel: no-harvest zones, closures, hazards, versioned terms
 * and allowances. Every query names the owner, so another owner's parcel matches nothing.
 */
const ownedBy = (parcelId: string, ownerId: string) =>
  sql`exists (select 1 from ${parcels} where ${parcels.id} = ${parcelId} and ${parcels.ownerId} = ${ownerId})`;

export async function listParcelRules(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const owned = ownedBy(parcelId, ownerId);
  const [zones, closureRows, hazardRows, termRows, allowanceRows] = await Promise.all([
    db
      .select({ id: noHarvestZones.id, name: noHarvestZones.name, reason: noHarvestZones.reason, boundary: sql<BoundaryGeometry>`ST_AsGeoJSON(${noHarvestZones.boundary}, 7)::json`, areaM2: sql<number>`ST_Area(${noHarvestZones.boundary}::geography)` })
      .from(noHarvestZones)
      .where(and(eq(noHarvestZones.parcelId, parcelId), owned))
      .orderBy(asc(noHarvestZones.name)),
    db.select().from(closures).where(and(eq(closures.parcelId, parcelId), owned)).orderBy(asc(closures.startsOn)),
    db.select().from(hazards).where(and(eq(hazards.parcelId, parcelId), owned)).orderBy(asc(hazards.title)),
    db.select().from(terms).where(and(eq(terms.parcelId, parcelId), owned)).orderBy(desc(terms.version)),
    db
      .select({ id: allowances.id, speciesId: species.id, commonName: species.commonName, scientificName: species.scientificName, speciesRetiredAt: species.retiredAt, seasons: allowances.seasons, methods: allowances.methods })
      .from(allowances)
      .innerJoin(species, eq(species.id, allowances.speciesId))
      .where(and(eq(allowances.parcelId, parcelId), isNull(allowances.removedAt), owned))
      .orderBy(asc(species.commonName)),
  ]);
  const limitRows = allowanceRows.length
    ? await db
        .select({ allowanceId: limits.allowanceId, scope: limits.scope, quantity: limits.quantity, unit: limits.unit })
        .from(limits)
        .innerJoin(allowances, eq(allowances.id, limits.allowanceId))
        .where(and(eq(allowances.parcelId, parcelId), sql`${limits.permitId} is null`, owned))
    : [];
  const withLimits = allowanceRows.map((a) => ({ ...a, limits: limitRows.filter((l) => l.allowanceId === a.id) }));
  return { zones, closures: closureRows, hazards: hazardRows, terms: termRows, allowances: withLimits };
}

const ruleWords = {
  zone: (z: { name: string }) => `the no-harvest zone ${z.name}`,
  closure: (c: { startsOn: string; endsOn: string; reason: string }) => `the closure ${formatDay(c.startsOn)} – ${formatDay(c.endsOn)} (${c.reason})`,
  hazard: (h: { title: string }) => `the hazard ${h.title}`,
};

export async function addZone(db: Executor, { parcelId, ownerId, zone, now = new Date() }: { parcelId: string; ownerId: string; zone: { name: string; reason: string; boundary: BoundaryGeometry }; now?: Date }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db.insert(noHarvestZones).values({ ...zone, parcelId, createdBy: ownerId }).returning({ id: noHarvestZones.id });
  if (row) await recordParcelChange(db, { parcelId, actorId: ownerId, action: 'zone.added', summary: `Added ${ruleWords.zone(zone)}.`, detail: { zoneId: row.id }, now });
  return row ?? null;
}

/** Deletes one of the owner's rule rows (zone, closure or hazard), noting it in the parcel's history; false when nothing matched. */
export async function removeRule(db: Executor, { table, id, parcelId, ownerId, now = new Date() }: { table: 'zone' | 'closure' | 'hazard'; id: string; parcelId: string; ownerId: string; now?: Date }) {
  const where = (target: typeof noHarvestZones | typeof closures | typeof hazards) => and(eq(target.id, id), eq(target.parcelId, parcelId), ownedBy(parcelId, ownerId));
  let summary: string | null = null;
  if (table === 'zone') {
    const [row] = await db.delete(noHarvestZones).where(where(noHarvestZones)).returning({ name: noHarvestZones.name });
    if (row) summary = ruleWords.zone(row);
  } else if (table === 'closure') {
    const [row] = await db.delete(closures).where(where(closures)).returning({ startsOn: closures.startsOn, endsOn: closures.endsOn, reason: closures.reason });
    if (row) summary = ruleWords.closure(row);
  } else {
    const [row] = await db.delete(hazards).where(where(hazards)).returning({ title: hazards.title });
    if (row) summary = ruleWords.hazard(row);
  }
  if (summary === null) return false;
  await recordParcelChange(db, { parcelId, actorId: ownerId, action: `${table}.removed`, summary: `Removed ${summary}.`, detail: { [`${table}Id`]: id }, now });
  return true;
}

export async function addClosure(db: Executor, { parcelId, ownerId, closure, now = new Date() }: { parcelId: string; ownerId: string; closure: { startsOn: string; endsOn: string; reason: string }; now?: Date }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db.insert(closures).values({ ...closure, parcelId, createdBy: ownerId }).returning({ id: closures.id });
  if (row) await recordParcelChange(db, { parcelId, actorId: ownerId, action: 'closure.added', summary: `Added ${ruleWords.closure(closure)}.`, detail: { closureId: row.id }, now });
  return row ?? null;
}

export async function addHazard(db: Executor, { parcelId, ownerId, hazard, now = new Date() }: { parcelId: string; ownerId: string; hazard: { kind: (typeof hazards.$inferInsert)['kind']; title: string; detail: string }; now?: Date }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db.insert(hazards).values({ ...hazard, parcelId }).returning({ id: hazards.id });
  if (row) await recordParcelChange(db, { parcelId, actorId: ownerId, action: 'hazard.added', summary: `Added ${ruleWords.hazard(hazard)}.`, detail: { hazardId: row.id }, now });
  return row ?? null;
}

/** Publishes a new version of the parcel's terms; earlier versions stay, as permits point at them. */
export async function publishTerms(db: Executor, { parcelId, ownerId, body, now }: { parcelId: string; ownerId: string; body: string; now: Date }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db
    .insert(terms)
    .values({ parcelId, body, publishedBy: ownerId, publishedAt: now, version: sql`(select coalesce(max(${terms.version}), 0) + 1 from ${terms} where ${terms.parcelId} = ${parcelId})` })
    .returning({ id: terms.id, version: terms.version });
  if (row) await recordParcelChange(db, { parcelId, actorId: ownerId, action: 'terms.published', summary: `Published version ${row.version} of the terms.`, detail: { termsId: row.id }, now });
  return row ?? null;
}

const measureSet = (units: readonly { unit: string }[]) => [...new Set(units.map((l) => measureOf(l.unit as Unit)))].sort();

/** Which allowance a save may touch: any (create or replace), only a new one, or one named allowance. */
export type AllowanceTarget = { kind: 'any' } | { kind: 'new' } | { kind: 'existing'; allowanceId: string };

/**
 * Sets the allowance of one species on the parcel, with its parcel-level limits; adding a removed
 * species again brings its row back. `target` says whether this may replace a species' allowance
 * (`any`, the original PUT), must add one (`new`: a species that already has one is a 409 naming
 * it, so nothing is replaced unseen) or changes one named allowance (`existing`). What the limits
 * measure may not change while entries count in a season that has not ended: their tallies would
 * silently start again from nothing. The amounts may change at any time. Each change is written to
 * the parcel's history, in words.
 */
export async function saveAllowance(
  db: Executor,
  { parcelId, ownerId, allowance, now, target = { kind: 'any' } }: { parcelId: string; ownerId: string; allowance: AllowanceInput; now: Date; target?: AllowanceTarget },
) {
  return db.transaction(async (tx) => {
    const [parcel] = await tx.select({ timeZone: parcels.timeZone }).from(parcels).where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId))).for('update');
    if (!parcel) return null;
    const [speciesRow] = await tx.select({ commonName: species.commonName }).from(species).where(eq(species.id, allowance.speciesId));
    const speciesName = speciesRow?.commonName ?? 'That species';
    if (target.kind === 'existing') {
      const [named] = await tx.select({ speciesId: allowances.speciesId }).from(allowances).where(and(eq(allowances.id, target.allowanceId), eq(allowances.parcelId, parcelId), isNull(allowances.removedAt)));
      if (!named) throw notFound('Allowance');
      if (named.speciesId !== allowance.speciesId) throw invalidInput('speciesId', 'An allowance keeps its species; remove it and add an allowance for the other species instead.');
    }
    const [current] = await tx
      .select({ id: allowances.id, removedAt: allowances.removedAt, seasons: allowances.seasons, methods: allowances.methods })
      .from(allowances)
      .where(and(eq(allowances.parcelId, parcelId), eq(allowances.speciesId, allowance.speciesId)));
    const active = current && !current.removedAt ? current : null;
    const [chosen] = await tx.select({ retiredAt: species.retiredAt }).from(species).where(eq(species.id, allowance.speciesId));
    if (chosen?.retiredAt && !active) {
      throw new AppError(409, 'species-retired', `${speciesName} is retired from the catalogue, so it cannot be added to an allowance; the allowances that already name it stay as they are.`, 'speciesId');
    }
    if (active && target.kind === 'new') {
      throw new AppError(409, 'allowance-exists', `${speciesName} already has an allowance on this parcel; change that one instead of adding it again.`, 'speciesId', { allowanceId: active.id });
    }
    const limitsBefore = active
      ? await tx.select({ scope: limits.scope, quantity: limits.quantity, unit: limits.unit }).from(limits).where(and(eq(limits.allowanceId, active.id), isNull(limits.permitId)))
      : [];
    if (active) {
      const before = measureSet(limitsBefore);
      const after = measureSet(allowance.limits);
      if (before.join() !== after.join()) {
        const today = localDate(now, parcel.timeZone);
        const [open] = await tx.execute<{ season_end: string; common_name: string }>(sql`
          select max(e.season_end)::text as season_end, (select s.common_name from species s where s.id = ${allowance.speciesId}::uuid) as common_name
          from harvest_entries e where e.parcel_id = ${parcelId}::uuid and e.species_id = ${allowance.speciesId}::uuid and e.season_end >= ${today}::date
          having count(*) > 0`);
        if (open) {
          const kinds = (ms: string[]) => (ms.length ? ms.map((m) => unitsOfMeasure(m as Measure)).join(' and in ') : 'no unit');
          throw new AppError(
            409,
            'measure-in-use',
            `${open.common_name} already has entries this season counted in ${kinds(before)}. Its limits must keep counting that way until the season ends on ${formatDay(open.season_end)}; you can still change the amounts, seasons and methods.`,
            'limits',
          );
        }
      }
    }
    const [row] = await tx
      .insert(allowances)
      .values({ parcelId, speciesId: allowance.speciesId, seasons: allowance.seasons, methods: allowance.methods })
      .onConflictDoUpdate({ target: [allowances.parcelId, allowances.speciesId], set: { seasons: allowance.seasons, methods: allowance.methods, removedAt: null, removedBy: null, updatedAt: now } })
      .returning({ id: allowances.id });
    if (!row) return null;
    await tx.delete(limits).where(and(eq(limits.allowanceId, row.id), sql`${limits.permitId} is null`));
    if (allowance.limits.length) await tx.insert(limits).values(allowance.limits.map((l) => ({ ...l, allowanceId: row.id })));
    if (active) {
      const changes = describeAllowanceChanges({ seasons: active.seasons, methods: active.methods, limits: limitsBefore }, allowance);
      if (changes.length) {
        await recordParcelChange(tx, { parcelId, actorId: ownerId, action: 'allowance.changed', summary: `Changed the allowance for ${speciesName}: ${changes.join('; ')}.`, detail: { allowanceId: row.id, speciesId: allowance.speciesId }, now });
      }
    } else {
      await recordParcelChange(tx, { parcelId, actorId: ownerId, action: 'allowance.added', summary: `Allowed ${speciesName}: ${describeAllowance(allowance)}.`, detail: { allowanceId: row.id, speciesId: allowance.speciesId }, now });
    }
    return { id: row.id, created: !active };
  });
}

/**
 * Removes an allowance: foragers may no longer take the species, but the row stays, with the
 * permits' tighter limits on it, as the history entries and permits point at.
 */
export async function removeAllowance(db: Executor, { parcelId, ownerId, allowanceId, now }: { parcelId: string; ownerId: string; allowanceId: string; now: Date }) {
  return db.transaction(async (tx) => {
    const rows = await tx
      .update(allowances)
      .set({ removedAt: now, removedBy: ownerId, updatedAt: now })
      .where(and(eq(allowances.id, allowanceId), eq(allowances.parcelId, parcelId), isNull(allowances.removedAt), ownedBy(parcelId, ownerId)))
      .returning({ id: allowances.id, speciesId: allowances.speciesId });
    const removed = rows[0];
    if (!removed) return false;
    const [speciesRow] = await tx.select({ commonName: species.commonName }).from(species).where(eq(species.id, removed.speciesId));
    await recordParcelChange(tx, { parcelId, actorId: ownerId, action: 'allowance.removed', summary: `Removed the allowance for ${speciesRow?.commonName ?? 'a species'}.`, detail: { allowanceId }, now });
    return true;
  });
}

/** How many species the parcel allows and whether it has terms: what opening it to requests needs (src/lib/listing.ts). */
export async function listingFacts(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const [row] = await db.execute<{ allowances: number; has_terms: boolean }>(sql`
    select (select count(*)::int from allowances a where a.parcel_id = p.id and a.removed_at is null) as allowances,
           exists (select 1 from terms t where t.parcel_id = p.id) as has_terms
    from parcels p where p.id = ${parcelId}::uuid and p.owner_id = ${ownerId}`);
  return row ? { allowances: row.allowances, hasTerms: row.has_terms } : null;
}

export async function ownsParcel(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const rows = await db.select({ id: parcels.id }).from(parcels).where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId)));
  return rows.length > 0;
}
