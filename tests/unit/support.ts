/** What `f` throws, for a test to look at; fails when it throws nothing. */
export function thrown(f: () => unknown): unknown {
  try {
    f();
  } catch (error) {
    return error;
  }
  throw new Error('it did not throw');
}
