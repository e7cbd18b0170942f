import { sql } from 'drizzle-orm';
import { db } from '../db';
import { formatDay } from '../lib/field/words';
import { formatQuantities } from '../lib/tally-words';
import { mailHtml, sendMail } from './mail';

/**
 * Tells the landowner (and the stewards of a club permit) at once that an entry went over a limit.
 * A correction that took its day over is told the same way, naming the day it counts on. Each
 * recipient is told once per entry: asked again (the entry's key sent again after a lost answer), it
 * sends only what did not go the first time.
 */
export async function noticeBreach({ entryId, origin }: { entryId: string; origin: string }) {
  const [row] = await db.execute<{
    parcel_id: string; parcel_name: string; species: string; quantities: { quantity: string; unit: string }[]; forager: string; counted_on: string;
    correction: boolean; recipients: string[];
  }>(sql`
    select p.id as parcel_id, p.name as parcel_name, s.common_name as species, coalesce(f.name, f.email) as forager, e.counted_on::text,
      e.corrects_entry_id is not null as correction,
      (select json_agg(json_build_object('quantity', trim_scale(q.quantity)::text, 'unit', q.unit) order by q.measure) from harvest_quantities q where q.entry_id = e.id) as quantities,
      array_remove(array[(select u.email from users u where u.id = p.owner_id)] ||
        coalesce((select array_agg(u.email) from permits pm join club_memberships m on m.club_id = pm.holder_club_id and m.role = 'steward' and m.state = 'active'
          join users u on u.id = m.user_id where pm.id = e.permit_id), '{}'), null) as recipients
    from harvest_entries e join parcels p on p.id = e.parcel_id join species s on s.id = e.species_id join users f on f.id = e.forager_id
    where e.id = ${entryId}`);
  if (!row) return;
  const heading = `Limit breached on ${row.parcel_name}`;
  const what = row.correction
    ? `${row.forager} corrected their entry of ${row.species} for ${formatDay(row.counted_on)} by ${formatQuantities(row.quantities, { signed: true })}, which takes a harvest limit of that day over.`
    : `${row.forager} recorded ${formatQuantities(row.quantities)} of ${row.species} on ${formatDay(row.counted_on)}, which takes a harvest limit over.`;
  const paragraphs = [
    `${what} They confirmed it knowingly; the entry is flagged as a breach.`,
    'Follow it up with them; the ledger keeps the entry and any correction.',
  ];
  for (const to of row.recipients) {
    try {
      await sendMail({ purpose: 'breach', to, dedupeKey: `breach:${entryId}:${to}`, subject: heading, text: `${heading}\n\n${paragraphs.join('\n\n')}\n\n${origin}/land/${row.parcel_id}\n`, html: mailHtml({ heading, paragraphs, action: { label: 'Open the parcel', url: `${origin}/land/${row.parcel_id}` } }) });
    } catch (error) {
      console.error(`could not send breach mail to ${to}:`, error);
    }
  }
}
