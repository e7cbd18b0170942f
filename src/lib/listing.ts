/**
 * What a parcel needs before foragers may find it and ask for access (open to requests): at least
 * one allowance, so they know what may be taken, and current terms, so they know what they agree
 * to. Pure, so the page says what is missing before the landowner tries, and the API refuses with
 * the same sentence.
 */
export type ListingFacts = { allowances: number; hasTerms: boolean };

/** What is still missing, in words a landowner can act on; empty when the parcel may be opened. */
export function listingNeeds({ allowances, hasTerms }: ListingFacts): string[] {
  return [
    ...(allowances > 0 ? [] : ['an allowance: at least one species foragers may take, with its season, methods and limits']),
    ...(hasTerms ? [] : ['terms: the text foragers accept before their permit becomes active']),
  ];
}

/** The refusal, as one sentence: "Before foragers can ask for access, the parcel needs an allowance … and terms …". */
export function listingRefusal(facts: ListingFacts): string | null {
  const needs = listingNeeds(facts);
  if (needs.length === 0) return null;
  return `Before foragers can ask for access, the parcel needs ${needs.join(', and ')}. Add ${needs.length > 1 ? 'them' : 'it'}, then open the parcel to requests.`;
}
