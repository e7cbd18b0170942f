import { describe, expect, it } from 'vitest';
import { signInSchema, signUpSchema } from '../../src/lib/accounts.schemas';

const malformedMessage = 'That does not look like an e-mail address; it should look like name@example.org.';

/** The messages zod reports for one field, in order. */
function messagesFor(result: { success: boolean; error?: { issues: { path: PropertyKey[]; message: string }[] } }, field: string) {
  expect(result.success).toBe(false);
  return (result.error?.issues ?? []).filter((issue) => issue.path[0] === field).map((issue) => issue.message);
}

describe('signInSchema', () => {
  it('given an address with surrounding spaces and capitals, it trims and lower-cases it', () => {
    expect(signInSchema.parse({ email: '  John.Q.Public@Example.COM \t' })).toEqual({ email: 'john.q.public@example.com' });
  });

  // Addresses of the forms used in RFC 5322 Appendix A.1 (from memory ✱): dot-atoms in the local part, subdomains.
  it.each(['jdoe@example.org', 'mary@x.test', 'john.q.public@example.com', 'pete+forage@silly.example', 'a.b-c_d@one.two.example'])(
    'given the well-formed address %s, it accepts it unchanged',
    (email) => {
      expect(signInSchema.parse({ email })).toEqual({ email });
    },
  );

  // RFC 5322 §3.4.1 addr-spec = local-part "@" domain; §3.2.3 a dot-atom has no leading, trailing or doubled dot
  // and no unquoted space (from memory ✱).
  it.each([
    ['no @ at all', 'jdoe.example.org'],
    ['nothing before the @', '@example.org'],
    ['nothing after the @', 'jdoe@'],
    ['two @ signs', 'jdoe@@example.org'],
    ['an unquoted space in the local part', 'john doe@example.org'],
    ['a leading dot in the local part', '.jdoe@example.org'],
    ['a doubled dot in the local part', 'john..doe@example.org'],
    ['a comma instead of a dot', 'jdoe@example,org'],
  ])('given an address with %s, it refuses it with the message that says what an address looks like', (_what, email) => {
    expect(messagesFor(signInSchema.safeParse({ email }), 'email')).toEqual([malformedMessage]);
  });

  it('given an empty or blank address, it asks for one', () => {
    expect(messagesFor(signInSchema.safeParse({ email: '' }), 'email')).toEqual(['Enter your e-mail address.']);
    expect(messagesFor(signInSchema.safeParse({ email: '   ' }), 'email')).toEqual(['Enter your e-mail address.']);
  });

  it('given no address at all, it asks for one', () => {
    expect(messagesFor(signInSchema.safeParse({}), 'email')).toEqual(['Enter your e-mail address.']);
  });

  // RFC 5321 §4.5.3.1.3: a path is at most 256 octets including the angle brackets, so 254 for the address
  // (RFC 3696 erratum 1690), from memory ✱.
  it('given an address of 255 characters, it refuses it as longer than any address can be', () => {
    const email = `${'a'.repeat(60)}@${'b'.repeat(60)}.${'c'.repeat(60)}.${'d'.repeat(60)}.${'e'.repeat(7)}.org`;
    expect(email).toHaveLength(255);
    expect(messagesFor(signInSchema.safeParse({ email }), 'email')).toEqual(['That address is longer than any e-mail address can be.']);
  });

  it('given an address of exactly 254 characters, it accepts it', () => {
    const email = `${'a'.repeat(60)}@${'b'.repeat(60)}.${'c'.repeat(60)}.${'d'.repeat(60)}.${'e'.repeat(6)}.org`;
    expect(email).toHaveLength(254);
    expect(signInSchema.safeParse({ email }).success).toBe(true);
  });
});

describe('signUpSchema', () => {
  it('given a name and address with stray spaces, it trims both and lower-cases the address', () => {
    expect(signUpSchema.parse({ email: ' Ruth.Alder@Example.org ', name: '  Ruth Alder  ', managesLand: true })).toEqual({
      email: 'ruth.alder@example.org',
      name: 'Ruth Alder',
      managesLand: true,
      // Left out, the land a landowner claims and their note read as nothing said.
      claimedLand: null,
      signUpNote: null,
    });
  });

  it('given no managesLand, it defaults to false', () => {
    expect(signUpSchema.parse({ email: 'jdoe@example.org', name: 'J. Doe' }).managesLand).toBe(false);
  });

  it('given managesLand that is not a boolean, it refuses it', () => {
    expect(signUpSchema.safeParse({ email: 'jdoe@example.org', name: 'J. Doe', managesLand: 'yes' }).success).toBe(false);
  });

  it('given an empty or blank name, it asks for the name', () => {
    expect(messagesFor(signUpSchema.safeParse({ email: 'jdoe@example.org', name: '' }), 'name')).toEqual(['Enter your name.']);
    expect(messagesFor(signUpSchema.safeParse({ email: 'jdoe@example.org', name: ' \n ' }), 'name')).toEqual(['Enter your name.']);
    expect(messagesFor(signUpSchema.safeParse({ email: 'jdoe@example.org' }), 'name')).toEqual(['Enter your name.']);
  });

  it('given a name of 101 characters, it refuses it with the length limit', () => {
    expect(messagesFor(signUpSchema.safeParse({ email: 'jdoe@example.org', name: 'x'.repeat(101) }), 'name')).toEqual([
      'Keep the name to 100 characters or fewer.',
    ]);
  });

  it('given a name of 100 characters once trimmed, it accepts it', () => {
    expect(signUpSchema.parse({ email: 'jdoe@example.org', name: ` ${'x'.repeat(100)} ` }).name).toHaveLength(100);
  });

  it('given a malformed address and an empty name, it reports both fields', () => {
    const result = signUpSchema.safeParse({ email: 'jdoe', name: '' });
    expect(messagesFor(result, 'email')).toEqual([malformedMessage]);
    expect(messagesFor(result, 'name')).toEqual(['Enter your name.']);
  });
});
