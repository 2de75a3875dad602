/**
 * The publication record moved down to src/io/publishedRecord.ts: reading and verifying it is
 * part of loading a release (the io layer), which must not call up into publish/.
 */
export * from '../io/publishedRecord.ts';
