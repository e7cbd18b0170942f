import { db } from '../../db';
import { findUserByEmail } from '../../db/accounts.queries';
import { signInSchema } from '../../lib/accounts.schemas';
import { AppError } from '../../lib/errors';
import { sendSignInLink, spendSignInAllowance } from '../../server/auth';
import { endpoint, json, readJson } from '../../server/http';

/** Sends a sign-in link to an existing account. */
export const POST = endpoint(async ({ request, url, clientAddress }) => {
  const { email, next } = await readJson(request, signInSchema);
  const user = await findUserByEmail(db, { email });
  if (!user) {
    throw new AppError(404, 'no-account', 'No account uses this address. Check the spelling, or create an account.', 'email');
  }
  await spendSignInAllowance({ email, clientAddress: clientAddress ?? null });
  await sendSignInLink({ email, origin: url.origin, next, clientAddress: clientAddress ?? null });
  return json({ sent: true, email }, 202);
});
