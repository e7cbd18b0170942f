import type { ApiOperation } from './api-operation';
import { answerMembershipSchema, auditEntriesQuerySchema, auditQuerySchema, flagNoteSchema, inviteMemberSchema, manageMembershipSchema, seasonReportQuerySchema, sendSeasonReportSchema } from './clubs.schemas';

/** The club, audit, flag and season-report endpoints, for the OpenAPI document (src/server/openapi.ts). */

const steward = "The club's stewards";
const owner = "The parcel's landowner";
const reportReaders = "The parcel's landowner (everyone's, or one club's), or a steward (their club's)";

export const clubOperations: ApiOperation[] = [
  { method: 'post', path: '/api/clubs/{id}/members', tag: 'clubs', summary: 'Invite someone to the club by e-mail', who: steward, body: inviteMemberSchema, ok: { status: 201, description: '`{ membershipId, email, state }`' } },
  { method: 'post', path: '/api/clubs/{id}/members/{membershipId}', tag: 'clubs', summary: 'Remove a member or change their role', who: steward, body: manageMembershipSchema, ok: { status: 200, description: '`{ membershipId, action }`' } },
  { method: 'post', path: '/api/memberships/{id}', tag: 'clubs', summary: 'Accept or decline your invitation, or leave the club', who: 'The person invited, or the member', body: answerMembershipSchema, ok: { status: 200, description: '`{ membershipId, action }`' } },
  { method: 'get', path: '/api/clubs/{id}/audit', tag: 'audit', summary: "The club's tallies by parcel, species and member against every limit", who: steward, query: auditQuerySchema, ok: { status: 200, description: 'The tallies' } },
  { method: 'get', path: '/api/clubs/{id}/audit/entries', tag: 'audit', summary: "The entries behind one member's club tally, without positions", who: steward, query: auditEntriesQuerySchema, ok: { status: 200, description: '`{ entries }`' } },
  { method: 'get', path: '/api/clubs/{id}/flags', tag: 'audit', summary: 'Breaches and nearing tallies under the club permits, newest first', who: steward, ok: { status: 200, description: '`{ flags }`' } },
  { method: 'get', path: '/api/parcels/{id}/audit', tag: 'audit', summary: "Every holder's tallies on your parcel against every limit", who: owner, query: auditQuerySchema, ok: { status: 200, description: 'The tallies' } },
  { method: 'get', path: '/api/parcels/{id}/audit/entries', tag: 'audit', summary: 'The entries behind one tally on your parcel, with positions', who: owner, query: auditEntriesQuerySchema, ok: { status: 200, description: '`{ entries }`' } },
  { method: 'get', path: '/api/parcels/{id}/flags', tag: 'audit', summary: 'Breaches and nearing tallies on your parcel, newest first', who: owner, ok: { status: 200, description: '`{ flags }`' } },
  {
    method: 'post', path: '/api/flags/{id}/notes', tag: 'audit', summary: 'Record a follow-up on a flag; `handled` marks it handled, `sendToMember` also e-mails it to the flagged forager',
    who: "The parcel's landowner, or a steward of the club the flag was raised under", body: flagNoteSchema, ok: { status: 201, description: '`{ note, sentTo }`' },
  },
  { method: 'get', path: '/api/parcels/{id}/season-report', tag: 'reports', summary: 'The season report of a parcel', who: reportReaders, query: seasonReportQuerySchema, ok: { status: 200, description: 'The report' } },
  { method: 'get', path: '/api/parcels/{id}/season-report/csv', tag: 'reports', summary: 'The season report as CSV (RFC 4180)', who: reportReaders, query: seasonReportQuerySchema, ok: { status: 200, description: 'The CSV, as an attachment', type: 'text/csv' } },
  { method: 'post', path: '/api/parcels/{id}/season-report/send', tag: 'reports', summary: "E-mail the season report to the parcel's landowner", who: reportReaders, body: sendSeasonReportSchema, ok: { status: 200, description: '`{ sentTo, asOf }`' } },
];
