import { sql } from 'drizzle-orm';
import type { FlagKind, NoticeFacts } from '../lib/flag-words';
import type { Executor } from './client';

/**
 * What the e-mail about an entry says and whom it goes to: the parcel's landowner, and the active
 * stewards of the club whose permit the entry counts under. Null for an unknown entry.
 */
export async function entryNoticeFacts(db: Executor, { entryId }: { entryId: string }): Promise<(NoticeFacts & { recipients: string[]; breach: boolean }) | null> {
  const [row] = await db.execute<{
    parcel_id: string; parcel_name: string; species: string; quantities: { quantity: string; unit: string }[]; forager: string; counted_on: string;
    correction: boolean; breach: boolean; flag_kind: FlagKind | null; flag_message: string | null; recipients: string[];
  }>(sql`
    select p.id as parcel_id, p.name as parcel_name, s.common_name as species, coalesce(f.name, f.email) as forager, e.counted_on::text,
      e.corrects_entry_id is not null as correction, e.breach, fl.kind as flag_kind, fl.message as flag_message,
      (select json_agg(json_build_object('quantity', trim_scale(q.quantity)::text, 'unit', q.unit) order by q.measure) from harvest_quantities q where q.entry_id = e.id) as quantities,
      array_remove(array[(select u.email from users u where u.id = p.owner_id)] ||
        coalesce((select array_agg(u.email order by u.email) from permits pm join club_memberships m on m.club_id = pm.holder_club_id and m.role = 'steward' and m.state = 'active'
          join users u on u.id = m.user_id where pm.id = e.permit_id), '{}'), null) as recipients
    from harvest_entries e join parcels p on p.id = e.parcel_id join species s on s.id = e.species_id join users f on f.id = e.forager_id
      left join flags fl on fl.entry_id = e.id
    where e.id = ${entryId}::uuid`);
  if (!row) return null;
  return {
    entryId, parcelId: row.parcel_id, parcelName: row.parcel_name, species: row.species, forager: row.forager, quantities: row.quantities, countedOn: row.counted_on,
    correction: row.correction, breach: row.breach, flagKind: row.flag_kind, flagMessage: row.flag_message, recipients: row.recipients,
  };
}
