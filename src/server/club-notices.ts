import type { Tx } from '../db/client';
import type { SeasonReport } from '../db/reports.queries';
import { sql } from 'drizzle-orm';
import { mailHtml, sendMail } from './mail';
import { csvContentType } from '../lib/csv';
import { formatDate } from '../lib/format';
import { seasonReportCsv, seasonReportFileName } from '../lib/season-report-csv';
import { entriesWords, reportLayout, reportTallyLine, seasonHeading, untakenLine } from '../lib/season-report-words';
import { formatQuantities } from '../lib/tally-words';

/** An invitation to a club, with the way in: sign in with the invited address, then open Club. Written in `tx`, the invitation's transaction. */
export async function noticeClubInvitation(tx: Tx, { membershipId, email, origin, newAccount }: { membershipId: string; email: string; origin: string; newAccount: boolean }) {
  const [row] = await tx.execute<{ club_name: string; inviter: string | null }>(sql`
    select c.name as club_name, coalesce(u.name, u.email) as inviter
    from club_memberships m join clubs c on c.id = m.club_id left join users u on u.id = m.invited_by where m.id = ${membershipId}::uuid`);
  if (!row) return;
  const heading = `You are invited to join ${row.club_name}`;
  const paragraphs = [
    `${row.inviter ?? 'A steward'} invited you to ${row.club_name} on Tallywood. Members harvest under the club's permits on other people's land, within the limits the landowners set.`,
    newAccount ? `Sign in with this address (${email}) to accept or decline; no password is needed.` : 'Open Club to accept or decline.',
  ];
  const url = `${origin}/sign-in?next=${encodeURIComponent('/club')}`;
  await sendMail({ purpose: 'club-invitation', to: email, subject: heading, text: `${heading}\n\n${paragraphs.join('\n\n')}\n\nOpen Club: ${url}\n`, html: mailHtml({ heading, paragraphs, action: { label: 'Open Club', url } }) }, tx);
}

const count = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;
const summary = (report: SeasonReport) =>
  `${count(report.visits, 'visit', 'visits')}, ${count(report.foragers, 'forager', 'foragers')}, ${count(report.breaches.length, 'breach', 'breaches')}, ${count(report.openFlags, 'flag', 'flags')} still open.`;

const viewWords = (report: SeasonReport) => (report.club ? `Entries under ${report.club.name}'s permits` : 'Entries of every permit holder');

/** The species taken, under one heading per season, then one line for those nothing was taken of. */
function speciesLines(report: SeasonReport): string[] {
  const { groups, untaken } = reportLayout(report);
  const nothing = untakenLine(untaken);
  if (report.species.length === 0) return ['No species on this parcel is in a season on that date or before it.'];
  return [
    ...(groups.length === 0 ? ['Nothing was taken this season.', ''] : []),
    ...groups.flatMap((g) => [
      `${seasonHeading(g.season)}:`,
      ...g.species.flatMap((s) => [`  ${s.commonName} (${s.scientificName}): ${formatQuantities(s.taken)} taken, ${entriesWords(s)}`, ...s.tallies.map((t) => `    ${reportTallyLine(t)}`)]),
      '',
    ]),
    ...(nothing ? [nothing, ''] : []),
  ];
}

/** The season report in words, for the e-mail's text part. */
export function seasonReportText(report: SeasonReport, url: string): string {
  const lines = [
    `Season report: ${report.parcel.name}${report.club ? ` — ${report.club.name}` : ''}`,
    `${viewWords(report)}, as of ${formatDate(report.asOf)} (${report.parcel.timeZone}).`,
    summary(report),
    '',
    ...speciesLines(report),
    ...(report.breaches.length > 0
      ? ['Breaches:', ...report.breaches.map((b) => `  ${formatDate(b.entry.countedOn)} ${b.commonName}, ${b.foragerName}: ${formatQuantities(b.entry.quantities)}; ${b.handled ? 'handled' : 'open'}${b.notes.length ? ` — ${b.notes[b.notes.length - 1]?.note}` : ''}`)]
      : ['No breaches.']),
    '',
    'The figures are attached as a CSV file.',
    `The full report, printable: ${url}`,
  ];
  return `${lines.join('\n')}\n`;
}

/** Sends a season report, with its CSV attached, to the parcel's landowner (and a copy to whoever sent it). */
export async function sendSeasonReportMail({ report, origin, senderEmail }: { report: SeasonReport; origin: string; senderEmail: string }) {
  const query = new URLSearchParams({ asOf: report.asOf, ...(report.club ? { club: report.club.id } : {}) });
  const url = `${origin}/reports/season/${report.parcel.id}?${query}`;
  const heading = `Season report for ${report.parcel.name}${report.club ? ` from ${report.club.name}` : ''}`;
  const { groups, untaken } = reportLayout(report);
  const nothing = untakenLine(untaken);
  const paragraphs = [
    `${viewWords(report)}, as of ${formatDate(report.asOf)}.`,
    summary(report),
    ...groups.flatMap((g) => [`${seasonHeading(g.season)}:`, ...g.species.map((s) => `${s.commonName}: ${formatQuantities(s.taken)} taken, ${entriesWords(s)}. ${s.tallies.map(reportTallyLine).join('; ') || 'No limits'}.`)]),
    ...(groups.length === 0 && report.species.length > 0 ? ['Nothing was taken this season.'] : []),
    ...(nothing ? [nothing] : []),
    'The figures are attached as a CSV file.',
  ];
  const attachments = [{ filename: seasonReportFileName(report), contentType: csvContentType, content: seasonReportCsv(report) }];
  const to = [...new Set([report.parcel.ownerEmail, senderEmail])];
  for (const address of to) {
    await sendMail({ purpose: 'season-report', to: address, subject: heading, text: seasonReportText(report, url), html: mailHtml({ heading, paragraphs, action: { label: 'Open the report', url } }), attachments });
  }
  return to;
}
