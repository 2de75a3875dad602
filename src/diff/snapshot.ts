/** Moved to src/ladder/fitSnapshot.ts (the ladder's error budget uses it; diff imports it from there). */
export * from '../ladder/fitSnapshot.ts';
