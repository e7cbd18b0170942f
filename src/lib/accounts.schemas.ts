import { z } from 'zod';

/** One set of schemas for the sign-in forms and the API that receives them. */
export const emailAddress = z
  .string({ error: 'Enter your e-mail address.' })
  .trim()
  .min(1, 'Enter your e-mail address.')
  .max(254, 'That address is longer than any e-mail address can be.')
  .toLowerCase()
  .pipe(z.email('That does not look like an e-mail address; it should look like name@example.org.'));

/** Where to land after the link is opened: a path on this site only (never another host). */
const nextPath = z
  .string()
  .regex(/^\/(?!\/)[^\s]*$/, 'Only a path on this site.')
  .max(500)
  .optional()
  .catch(undefined);

export const signInSchema = z.object({ email: emailAddress, next: nextPath });

export const signUpSchema = z.object({
  email: emailAddress,
  name: z.string({ error: 'Enter your name.' }).trim().min(1, 'Enter your name.').max(100, 'Keep the name to 100 characters or fewer.'),
  /** A landowner or land manager; an admin verifies before they may grant permits. */
  managesLand: z.boolean().default(false),
});

export type SignInInput = z.infer<typeof signInSchema>;
export type SignUpInput = z.infer<typeof signUpSchema>;
