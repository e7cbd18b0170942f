import { sql } from 'drizzle-orm';
import type { FlaggedTally } from './schema/flags';
import type { FlagKind } from '../lib/flag-words';
import type { AuditScope } from './audit.queries';
import type { Executor } from './client';
import { flagNotes } from './schema';

export type FlagNoteView = { id: string; note: string; handled: boolean; authorName: string; createdAt: string };

export type FlagView = {
  id: string;
  kind: FlagKind;
  /** Why it was raised, for the kinds raised on sync (off permit: the engine's reasons); null for the others. */
  message: string | null;
  worstState: 'within' | 'nearing' | 'reached' | 'over';
  scopes: string[];
  tallies: FlaggedTally[];
  createdAt: string;
  parcelId: string;
  parcelName: string;
  /** The parcel's IANA zone: its flags' times are shown on its clock. */
  timeZone: string;
  speciesId: string;
  commonName: string;
  foragerId: string;
  foragerName: string;
  permitId: string | null;
  /** The entry, with the parcel-local day it counts on (a correction: its chain's first day). */
  entry: { id: string; quantities: { quantity: string; unit: string }[]; countedOn: string };
  /** The newest note decides: handled until a later note reopens it. */
  handled: boolean;
  notes: FlagNoteView[];
};

/** Flags in view, newest first: a club's (raised under its permits) or a landowner's (on their parcels). */
export async function listFlags(db: Executor, scope: AuditScope, { limit = 200 }: { limit?: number } = {}): Promise<FlagView[]> {
  const inView =
    'clubId' in scope
      ? sql`f.permit_id in (select cp.id from permits cp where cp.holder_club_id = ${scope.clubId}::uuid) ${scope.parcelId ? sql`and f.parcel_id = ${scope.parcelId}::uuid` : sql``}`
      : scope.parcelId
        ? sql`f.parcel_id = ${scope.parcelId}::uuid and p.owner_id = ${scope.ownerId}`
        : sql`p.owner_id = ${scope.ownerId}`;
  const rows = await db.execute<{
    id: string; kind: FlagView['kind']; message: string | null; worst_state: FlagView['worstState']; scopes: string[]; tallies: FlaggedTally[]; created_at: string;
    parcel_id: string; parcel_name: string; time_zone: string; species_id: string; common_name: string; forager_id: string; forager_name: string; permit_id: string | null;
    entry_id: string; quantities: { quantity: string; unit: string }[]; counted_on: string; notes: FlagNoteView[];
  }>(sql`
    select f.id, f.kind, f.message, f.worst_state, f.scopes::text[] as scopes, f.tallies, f.created_at::text, f.parcel_id, p.name as parcel_name, p.time_zone,
      f.species_id, s.common_name, f.forager_id, coalesce(u.name, u.email) as forager_name, f.permit_id,
      e.id as entry_id, e.counted_on::text,
      (select json_agg(json_build_object('quantity', trim_scale(q.quantity)::text, 'unit', q.unit) order by q.measure) from harvest_quantities q where q.entry_id = e.id) as quantities,
      coalesce((select json_agg(json_build_object('id', n.id, 'note', n.note, 'handled', n.handled, 'authorName', coalesce(a.name, a.email), 'createdAt', n.created_at) order by n.created_at, n.id)
        from flag_notes n join users a on a.id = n.author_id where n.flag_id = f.id), '[]') as notes
    from flags f
    join parcels p on p.id = f.parcel_id
    join species s on s.id = f.species_id
    join users u on u.id = f.forager_id
    join harvest_entries e on e.id = f.entry_id
    where ${inView}
    order by f.created_at desc, f.id
    limit ${limit}`);
  return rows.map((r) => ({
    id: r.id,
    kind: r.kind,
    message: r.message,
    worstState: r.worst_state,
    scopes: r.scopes,
    tallies: r.tallies,
    createdAt: new Date(r.created_at).toISOString(),
    parcelId: r.parcel_id,
    parcelName: r.parcel_name,
    timeZone: r.time_zone,
    speciesId: r.species_id,
    commonName: r.common_name,
    foragerId: r.forager_id,
    foragerName: r.forager_name,
    permitId: r.permit_id,
    entry: { id: r.entry_id, quantities: r.quantities, countedOn: r.counted_on },
    handled: r.notes.length > 0 ? Boolean(r.notes[r.notes.length - 1]?.handled) : false,
    notes: r.notes.map((n) => ({ ...n, createdAt: new Date(n.createdAt).toISOString() })),
  }));
}

/** Who may follow a flag up: the landowner of its parcel, and the club whose permit it was raised under. */
export async function flagAccess(db: Executor, { flagId }: { flagId: string }): Promise<{ ownerId: string; clubId: string | null } | null> {
  const [row] = await db.execute<{ owner_id: string; club_id: string | null }>(sql`
    select p.owner_id, pm.holder_club_id as club_id
    from flags f join parcels p on p.id = f.parcel_id left join permits pm on pm.id = f.permit_id
    where f.id = ${flagId}::uuid`);
  return row ? { ownerId: row.owner_id, clubId: row.club_id } : null;
}

/** A follow-up note; `handled` marks the flag handled (or, false, reopens it). Notes are never changed. */
export async function addFlagNote(db: Executor, { flagId, authorId, note, handled, now }: { flagId: string; authorId: string; note: string; handled: boolean; now: Date }) {
  const [row] = await db.insert(flagNotes).values({ flagId, authorId, note: note.trim(), handled, createdAt: now }).returning();
  return row;
}

/**
 * What a follow-up e-mail to the flagged forager says: the flag's facts, the forager's address, and
 * who is writing (the landowner, or a steward of the club it was raised under). Null for an unknown flag.
 */
export async function flagMemberFacts(db: Executor, { flagId, authorId }: { flagId: string; authorId: string }) {
  const [row] = await db.execute<{
    kind: FlagKind; worst_state: FlagView['worstState']; tallies: FlaggedTally[]; parcel_name: string; species: string; counted_on: string;
    quantities: { quantity: string; unit: string }[]; forager_email: string; forager_name: string; author_name: string; club_name: string | null; author_is_owner: boolean;
  }>(sql`
    select f.kind, f.worst_state, f.tallies, p.name as parcel_name, s.common_name as species, e.counted_on::text,
      (select json_agg(json_build_object('quantity', trim_scale(q.quantity)::text, 'unit', q.unit) order by q.measure) from harvest_quantities q where q.entry_id = e.id) as quantities,
      u.email as forager_email, coalesce(u.name, u.email) as forager_name,
      (select coalesce(a.name, a.email) from users a where a.id = ${authorId}) as author_name,
      (select c.name from permits pm join clubs c on c.id = pm.holder_club_id where pm.id = f.permit_id) as club_name,
      p.owner_id = ${authorId} as author_is_owner
    from flags f join parcels p on p.id = f.parcel_id join species s on s.id = f.species_id join users u on u.id = f.forager_id join harvest_entries e on e.id = f.entry_id
    where f.id = ${flagId}::uuid`);
  if (!row) return null;
  return {
    kind: row.kind, worstState: row.worst_state, tallies: row.tallies, parcelName: row.parcel_name, species: row.species, countedOn: row.counted_on, quantities: row.quantities,
    foragerEmail: row.forager_email, foragerName: row.forager_name, authorName: row.author_name, author: row.author_is_owner ? 'the landowner' : `a steward of ${row.club_name ?? 'the club'}`,
  };
}
