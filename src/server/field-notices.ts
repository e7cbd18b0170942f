import { sql } from 'drizzle-orm';
import { db } from '../db';
import { mailHtml, sendMail } from './mail';

/** Tells the landowner (and the stewards of a club permit) at once that an entry went over a limit. */
export async function noticeBreach({ entryId, origin }: { entryId: string; origin: string }) {
  const [row] = await db.execute<{ parcel_id: string; parcel_name: string; species: string; quantity: string; unit: string; forager: string; local_date: string; recipients: string[] }>(sql`
    select p.id as parcel_id, p.name as parcel_name, s.common_name as species, e.quantity::text, e.unit::text, coalesce(f.name, f.email) as forager, e.local_date::text,
      array_remove(array[(select u.email from users u where u.id = p.owner_id)] ||
        coalesce((select array_agg(u.email) from permits pm join club_memberships m on m.club_id = pm.holder_club_id and m.role = 'steward' and m.state = 'active'
          join users u on u.id = m.user_id where pm.id = e.permit_id), '{}'), null) as recipients
    from harvest_entries e join parcels p on p.id = e.parcel_id join species s on s.id = e.species_id join users f on f.id = e.forager_id
    where e.id = ${entryId}`);
  if (!row) return;
  const heading = `Limit breached on ${row.parcel_name}`;
  const paragraphs = [
    `${row.forager} recorded ${Number(row.quantity)} ${row.unit} of ${row.species} on ${row.local_date}, which takes a harvest limit over. They confirmed it knowingly; the entry is flagged as a breach.`,
    'Follow it up with them; the ledger keeps the entry and any correction.',
  ];
  for (const to of row.recipients) {
    try {
      await sendMail({ purpose: 'breach', to, subject: heading, text: `${heading}\n\n${paragraphs.join('\n\n')}\n\n${origin}/land/${row.parcel_id}\n`, html: mailHtml({ heading, paragraphs, action: { label: 'Open the parcel', url: `${origin}/land/${row.parcel_id}` } }) });
    } catch (error) {
      console.error(`could not send breach mail to ${to}:`, error);
    }
  }
}
