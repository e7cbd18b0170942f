import { z } from 'zod';
import { methods } from './land.schemas';
import { unitCodes, type Unit } from './units';

/** One set of schemas for the admin's catalogue forms and the API that receives them. */
export const speciesKinds = ['mushroom', 'leaf', 'shoot', 'root', 'flower', 'fruit', 'nut', 'bark'] as const;
export const lookalikeDangers = ['deadly', 'toxic', 'inedible'] as const;

const webAddress = z
  .string()
  .trim()
  .max(500, 'Keep the address to 500 characters or fewer.')
  .refine((s) => s === '' || /^https?:\/\/[^\s]+\.[^\s]+$/i.test(s), 'Give a full web address starting with https://, or leave it empty.')
  .transform((s) => (s === '' ? null : s));

export const cautionSchema = z.object({
  text: z.string({ error: 'Write the caution.' }).trim().min(1, 'Write the caution.').max(1000, 'Keep a caution to 1 000 characters or fewer.'),
  sourceTitle: z
    .string({ error: 'Name the source of this caution.' })
    .trim()
    .min(1, 'Name the source of this caution: a field guide, a paper or a web page, with its author if you can.')
    .max(300, 'Keep the source to 300 characters or fewer.'),
  sourceUrl: webAddress.nullish().transform((s) => s ?? null),
});

export const lookalikeSchema = z.object({
  commonName: z.string().trim().min(1, 'Name the lookalike.').max(120, 'Keep the name to 120 characters or fewer.'),
  scientificName: z.string().trim().min(1, 'Give the lookalike its scientific name.').max(120, 'Keep the name to 120 characters or fewer.'),
  danger: z.enum(lookalikeDangers, 'Say whether the lookalike is deadly, toxic or inedible.'),
  howToTell: z.string().trim().min(1, 'Say how to tell them apart.').max(1000, 'Keep it to 1 000 characters or fewer.'),
});

export const speciesSchema = z.object({
  commonName: z.string({ error: 'Give the common name.' }).trim().min(1, 'Give the common name.').max(120, 'Keep the common name to 120 characters or fewer.'),
  scientificName: z
    .string({ error: 'Give the scientific name.' })
    .trim()
    .min(1, 'Give the scientific name, such as Morchella americana.')
    .max(120, 'Keep the scientific name to 120 characters or fewer.'),
  kind: z.enum(speciesKinds, 'Choose what kind of species it is.'),
  usualUnit: z.enum(unitCodes as [Unit, ...Unit[]], 'Choose the unit foragers usually count it in.'),
  usualMethods: z.array(z.enum(methods, 'Choose methods from the list.')).max(methods.length).default([]),
  cautions: z.array(cautionSchema).min(1, 'Give at least one caution: every species has something a forager must know.').max(20, 'Keep to 20 cautions or fewer.'),
  lookalikes: z.array(lookalikeSchema).max(20, 'Keep to 20 lookalikes or fewer.').default([]),
  protectedStatus: z
    .string()
    .trim()
    .max(500, 'Keep the protected status to 500 characters or fewer.')
    .nullish()
    .transform((s) => (s ? s : null)),
});

export const retirementSchema = z.object({
  retired: z.boolean({ error: 'Say whether the species is retired (true) or back in use (false).' }),
});

export type SpeciesInput = z.output<typeof speciesSchema>;
export type SpeciesFormInput = z.input<typeof speciesSchema>;
export type CautionInput = z.output<typeof cautionSchema>;
