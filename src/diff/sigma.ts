/** Moved to src/ladder/sigmaDifference.ts (the ladder's error budget uses it; diff imports it from there). */
export * from '../ladder/sigmaDifference.ts';
