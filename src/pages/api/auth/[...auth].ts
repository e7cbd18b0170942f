import { Auth } from '@auth/core';
import type { APIRoute } from 'astro';
import { authConfig } from '../../../server/auth';
import { json } from '../../../server/http';

export const prerender = false;

/** Auth.js handles the e-mailed link, CSRF and session routes. */
export const GET: APIRoute = ({ request }) => Auth(request, authConfig);

/** Sign-in links are asked for through /api/sign-in, which validates and rate-limits first. */
export const POST: APIRoute = ({ request }) => {
  if (new URL(request.url).pathname.startsWith('/api/auth/signin')) {
    return json({ error: { code: 'not-found', message: 'Ask for a sign-in link at /api/sign-in.' } }, 404);
  }
  return Auth(request, authConfig);
};
