import { db } from '../db';
import type { SeasonReport } from '../db/reports.queries';
import { reportBasis } from '../db/reports.queries';
import { sql } from 'drizzle-orm';
import { mailHtml, sendMail } from './mail';
import { formatDate } from '../lib/format';
import { formatAmount, formatLimit, formatPercent, formatQuantities, formatSeasonDates, stateLabel } from '../lib/tally-words';

/** An invitation to a club, with the way in: sign in with the invited address, then open Club. */
export async function noticeClubInvitation({ membershipId, email, origin, newAccount }: { membershipId: string; email: string; origin: string; newAccount: boolean }) {
  const [row] = await db.execute<{ club_name: string; inviter: string | null }>(sql`
    select c.name as club_name, coalesce(u.name, u.email) as inviter
    from club_memberships m join clubs c on c.id = m.club_id left join users u on u.id = m.invited_by where m.id = ${membershipId}::uuid`);
  if (!row) return;
  const heading = `You are invited to join ${row.club_name}`;
  const paragraphs = [
    `${row.inviter ?? 'A steward'} invited you to ${row.club_name} on Tallywood. Members harvest under the club's permits on other people's land, within the limits the landowners set.`,
    newAccount ? `Sign in with this address (${email}) to accept or decline; no password is needed.` : 'Open Club to accept or decline.',
  ];
  const url = `${origin}/sign-in?next=${encodeURIComponent('/club')}`;
  try {
    await sendMail({ purpose: 'club-invitation', to: email, subject: heading, text: `${heading}\n\n${paragraphs.join('\n\n')}\n\nOpen Club: ${url}\n`, html: mailHtml({ heading, paragraphs, action: { label: 'Open Club', url } }) });
  } catch (error) {
    console.error(`could not send the club invitation to ${email}:`, error);
  }
}

const count = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;
const summary = (report: SeasonReport) =>
  `${count(report.visits, 'visit', 'visits')}, ${count(report.foragers, 'forager', 'foragers')}, ${count(report.breaches.length, 'breach', 'breaches')}, ${count(report.openFlags, 'flag', 'flags')} still open.`;

const tallyLine = (t: SeasonReport['species'][number]['tallies'][number]) =>
  `${formatLimit({ ...t.limit, scope: t.scope })} (${reportBasis[t.scope]}): ${formatAmount(t.used)} used, ${formatPercent(t.percent)}, ${stateLabel(t.state)}`;

const taken = (s: SeasonReport['species'][number]) => (s.taken.length > 0 ? formatQuantities(s.taken) : 'nothing');
const period = (report: SeasonReport) => (report.period ? `Season ${formatSeasonDates(report.period)}, as of ${formatDate(report.asOf)}` : `As of ${formatDate(report.asOf)}: no species is in a season yet`);

/** The season report in words, for the e-mail's text part. */
export function seasonReportText(report: SeasonReport, url: string): string {
  const lines = [
    `Season report: ${report.parcel.name}${report.club ? ` — ${report.club.name}` : ''}`,
    `${period(report)}.`,
    summary(report),
    '',
    ...report.species.flatMap((s) => [`${s.commonName} (${s.scientificName}), ${formatSeasonDates(s.season)}: taken ${taken(s)} by ${s.foragers} foragers in ${s.entries} entries`, ...s.tallies.map((t) => `  ${tallyLine(t)}`)]),
    '',
    ...(report.breaches.length > 0
      ? ['Breaches:', ...report.breaches.map((b) => `  ${formatDate(b.entry.countedOn)} ${b.commonName}, ${b.foragerName}: ${formatQuantities(b.entry.quantities)}; ${b.handled ? 'handled' : 'open'}${b.notes.length ? ` — ${b.notes[b.notes.length - 1]?.note}` : ''}`)]
      : ['No breaches.']),
    '',
    `The full report, printable, with CSV: ${url}`,
  ];
  return `${lines.join('\n')}\n`;
}

/** Sends a season report to the parcel's landowner (and a copy to whoever sent it). */
export async function sendSeasonReportMail({ report, origin, senderEmail }: { report: SeasonReport; origin: string; senderEmail: string }) {
  const query = new URLSearchParams({ asOf: report.asOf, ...(report.club ? { club: report.club.id } : {}) });
  const url = `${origin}/reports/season/${report.parcel.id}?${query}`;
  const heading = `Season report for ${report.parcel.name}${report.club ? ` from ${report.club.name}` : ''}`;
  const paragraphs = [
    `${period(report)}.`,
    summary(report),
    ...report.species.map((s) => `${s.commonName}: ${taken(s)} taken; ${s.tallies.map(tallyLine).join('; ') || 'no limits'}.`),
  ];
  const to = [...new Set([report.parcel.ownerEmail, senderEmail])];
  for (const address of to) {
    await sendMail({ purpose: 'season-report', to: address, subject: heading, text: seasonReportText(report, url), html: mailHtml({ heading, paragraphs, action: { label: 'Open the report', url } }) });
  }
  return to;
}
