import { db } from '../../db';
import { createAccount, findUserByEmail } from '../../db/accounts.queries';
import { signUpSchema } from '../../lib/accounts.schemas';
import { conflict } from '../../lib/errors';
import { sendSignInLink, spendSignInAllowance } from '../../server/auth';
import { endpoint, json, readJson } from '../../server/http';

/**
 * Anyone with an e-mail address may join as a forager. Saying you manage land adds the landowner
 * role, unverified until an admin verifies it.
 */
export const POST = endpoint(async ({ request, url, clientAddress }) => {
  const input = await readJson(request, signUpSchema);
  if (await findUserByEmail(db, { email: input.email })) {
    throw conflict('email', 'An account already uses this address. Sign in instead.');
  }
  // Limited before the account is made: a refused sign-up leaves nothing behind.
  await spendSignInAllowance({ email: input.email, clientAddress: clientAddress ?? null });
  const user = await createAccount(db, input);
  if (!user) throw conflict('email', 'An account already uses this address. Sign in instead.');
  await sendSignInLink({ email: input.email, origin: url.origin, clientAddress: clientAddress ?? null });
  return json({ created: true, email: user.email, roles: user.roles }, 201);
});
