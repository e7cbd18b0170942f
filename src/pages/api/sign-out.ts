import type { APIRoute } from 'astro';
import { db } from '../../db';
import { deleteSession } from '../../db/accounts.queries';
import { sessionCookieNames } from '../../server/auth';

/** Ends the session in the database and clears its cookie, then returns home. */
export const POST: APIRoute = async ({ cookies, redirect }) => {
  for (const name of sessionCookieNames) {
    const token = cookies.get(name)?.value;
    if (token) await deleteSession(db, { sessionToken: token });
    cookies.delete(name, { path: '/' });
  }
  return redirect('/?signed-out=1', 303);
};
