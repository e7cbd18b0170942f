import { describe, expect, it } from 'vitest';
import { parseProcesses } from '../../scripts/lib/processes.mjs';

describe('TALLYWOOD_PROCESSES', () => {
  it('given nothing set, it runs one process per core', () => {
    expect(parseProcesses(undefined, 8)).toBe(8);
    expect(parseProcesses('  ', 2)).toBe(2);
  });

  it('given a whole number from 1 to 64, it runs that many', () => {
    expect(parseProcesses('1', 8)).toBe(1);
    expect(parseProcesses(' 3 ', 8)).toBe(3);
    expect(parseProcesses('64', 8)).toBe(64);
  });

  it('given anything else, it says what to set instead of starting', () => {
    for (const value of ['0', '-1', '2.5', 'two', '65', '1e2']) {
      const said = parseProcesses(value, 4);
      expect(typeof said, value).toBe('string');
      expect(said).toContain('TALLYWOOD_PROCESSES');
      expect(said).toContain(`"${value}"`);
    }
  });
});
