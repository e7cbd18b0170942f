// How many app processes scripts/serve.mjs runs. Node built-ins only.

/**
 * TALLYWOOD_PROCESSES as a whole number of processes, `cores` when unset or empty; a sentence saying
 * what to set when it is not a whole number from 1 to 64.
 * @param {string | undefined} value
 * @param {number} cores os.availableParallelism()
 * @returns {number | string}
 */
export function parseProcesses(value, cores) {
  const text = (value ?? '').trim();
  if (text === '') return Math.max(1, cores);
  const count = /^\d+$/.test(text) ? Number(text) : Number.NaN;
  if (!Number.isInteger(count) || count < 1 || count > 64) {
    return `TALLYWOOD_PROCESSES must be a whole number of app processes from 1 to 64 (unset: one per core, ${cores} here); "${text}" is not.`;
  }
  return count;
}
