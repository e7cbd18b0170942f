import { z } from 'zod';
import type { ApiOperation } from './api-operation';
import { landownerDecisionSchema, signInSchema, signUpSchema } from './accounts.schemas';
import { reminderSettingsSchema } from './reminders.schemas';

/** The account and system endpoints, for the OpenAPI document (src/server/openapi.ts). */

export const accountOperations: ApiOperation[] = [
  { method: 'post', path: '/api/sign-in', tag: 'accounts', summary: 'E-mail a sign-in link to an existing account', who: 'Anyone', signedIn: false, body: signInSchema, ok: { status: 202, description: '`{ sent: true, email }`' }, refusals: { 429: 'Too many links asked for; Retry-After says when to try again' } },
  { method: 'post', path: '/api/sign-up', tag: 'accounts', summary: 'Create an account (forager; landowner unverified) and e-mail a link', who: 'Anyone', signedIn: false, body: signUpSchema, ok: { status: 201, description: '`{ created: true, email, roles }`' }, refusals: { 409: 'An account with that address exists', 429: 'Too many sign-ups; Retry-After says when to try again' } },
  {
    method: 'post', path: '/api/sign-out', tag: 'accounts', summary: 'End the session and clear its cookie', who: 'Anyone (ends the session its cookie names, if any)', signedIn: false,
    description: 'Reads no body. Answers with a redirect to the home page, signed out.', ok: { status: 303, description: 'To /?signed-out=1' },
  },
  { method: 'get', path: '/api/me', tag: 'accounts', summary: 'The signed-in person and their roles', who: 'Anyone signed in', ok: { status: 200, description: 'The person, their roles and clubs' } },
  { method: 'get', path: '/api/me/reminders', tag: 'accounts', summary: "The signed-in person's reminder e-mail switches", who: 'Foragers, stewards and landowners', ok: { status: 200, description: '`{ settings: { permitEnding, seasonOpening, closureStarting, weeklyDigest } }`; every kind is on until switched off' } },
  {
    method: 'put', path: '/api/me/reminders', tag: 'accounts', summary: 'Switch reminder e-mails on or off, each kind', who: 'Foragers, stewards and landowners (their own switches only)',
    body: reminderSettingsSchema, ok: { status: 200, description: '`{ settings }` as kept' },
  },
  {
    method: 'post', path: '/api/accounts/{id}/verify-landowner', tag: 'accounts', summary: 'Verify a landowner and e-mail them', who: 'Admins',
    description: 'A form post (Accept: text/html) is sent back to /accounts with a 303.', ok: { status: 200, description: '`{ verified }`' },
  },
  {
    method: 'post', path: '/api/accounts/{id}/landowner-decision', tag: 'accounts', summary: 'Verify a landowner, or decline with a reason; the landowner is e-mailed the outcome', who: 'Admins',
    body: landownerDecisionSchema, ok: { status: 200, description: '`{ outcome, account: { id, email } }`' },
  },
  { method: 'get', path: '/api/health', tag: 'system', summary: 'Database, PostGIS and migrations', who: 'Anyone', signedIn: false, ok: { status: 200, description: '`{ ok: true, status: "ready" }`; 503 with another `status` when not ready' } },
  { method: 'get', path: '/api/openapi.json', tag: 'system', summary: 'This document (OpenAPI 3.1)', who: 'Anyone', signedIn: false, ok: { status: 200, description: 'The document' } },
  {
    method: 'get', path: '/api/mailbox', tag: 'system', summary: "The local mail catcher's messages, newest first", who: 'Only from this machine, on a set-up that uses the built-in mail catcher (404 anywhere else)', signedIn: false,
    query: z.object({ to: z.string().optional().meta({ description: 'Only the messages to this address' }) }), ok: { status: 200, description: '`{ messages }`' },
  },
];
