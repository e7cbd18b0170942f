/** The field engine: where a forager stands, whether they may harvest, and what remains. Pure; runs in the browser too. */
export * from './types';
export { boundaryContains, distanceToEdgeM, placePosition } from './geometry';
export { geodesicDistanceM } from './geodesy';
export { addDays, addYears, closuresOn, currentSeason, endOfLocalDay, seasonAsOf, seasonOccurrencesBetween, localDateAt, localWallClock, startOfLocalDay } from './time';
export { entryBases, limitsInForce, measuresLimited, MissingQuantity, projectEntry, scopeOrder, talliesFor, tallyState, worstState, type Projection, type TallyContext } from './tallies';
export { countingFactsFor, flagFor, measuresOf, usageWindows, type CountingFacts, type FlagDecision, type UsageWindow } from './counting';
export { checkPermit, permitCovers, type PermitCheck } from './permit-check';
export { candidatesNear, decideCheckIn, methodAllowed, type CheckIn } from './verdict';
export { formatDay, formatDistance } from './words';
export { convert, fromBase, toBase, UnitMismatch, unitsOfMeasure } from '../units';
