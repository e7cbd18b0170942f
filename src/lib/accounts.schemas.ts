import { z } from 'zod';

/** One set of schemas for the sign-in forms and the API that receives them. */
export const emailAddress = z
  .string({ error: 'Enter your e-mail address.' })
  .trim()
  .min(1, 'Enter your e-mail address.')
  .max(254, 'That address is longer than any e-mail address can be.')
  .toLowerCase()
  .pipe(z.email('That does not look like an e-mail address; it should look like name@example.org.'));

/**
 * Where to land after the link is opened: a path on this site only (never another host). Anything
 * else is ignored, not refused; the meta says so for the OpenAPI document, which cannot read a catch.
 */
const nextPath = z
  .string()
  .regex(/^\/(?!\/)[^\s]*$/, 'Only a path on this site.')
  .max(500)
  .optional()
  .catch(undefined)
  .meta({ type: 'string', maxLength: 500, pattern: '^\\/(?!\\/)[^\\s]*$', description: 'A path on this site to open after signing in; anything else is ignored' });

/** Text a person may leave empty: empty or missing is stored as nothing. */
function optionalText(max: number, tooLong: string) {
  return z
    .string()
    .trim()
    .max(max, tooLong)
    .nullish()
    .transform((s) => (s ? s : null));
}

export const signInSchema = z.object({ email: emailAddress, next: nextPath });

export const signUpSchema = z.object({
  email: emailAddress,
  name: z.string({ error: 'Enter your name.' }).trim().min(1, 'Enter your name.').max(100, 'Keep the name to 100 characters or fewer.'),
  /** A landowner or land manager; an admin verifies before they may grant permits. */
  managesLand: z.boolean().default(false),
  /** For the admin who verifies a landowner: where the land is and what it is called. Optional. */
  claimedLand: optionalText(300, 'Keep the description of your land to 300 characters or fewer.'),
  /** Anything else the admin should know, such as how to confirm that you manage the land. Optional. */
  signUpNote: optionalText(1000, 'Keep the note to 1 000 characters or fewer.'),
});

/** The admin's answer to a landowner who asked to be verified. */
export const landownerDecisionSchema = z.discriminatedUnion('outcome', [
  z.object({ outcome: z.literal('verified') }),
  z.object({
    outcome: z.literal('declined'),
    reason: z
      .string({ error: 'Say why, so the landowner knows what to send or change.' })
      .trim()
      .min(1, 'Say why, so the landowner knows what to send or change.')
      .max(1000, 'Keep the reason to 1 000 characters or fewer.'),
  }),
], { error: 'Choose whether to verify or decline this landowner.' });

export type SignInInput = z.infer<typeof signInSchema>;
export type SignUpInput = z.infer<typeof signUpSchema>;
export type LandownerDecision = z.infer<typeof landownerDecisionSchema>;
