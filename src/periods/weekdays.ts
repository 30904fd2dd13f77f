/**
 * The days a week may start on, in ISO 8601 order (Monday first). Kept apart from the rules schema so
 * that the period arithmetic, which a reader's worker thread loads, does not load the schema library.
 */
export const WEEKDAYS = ['monday', 'tuesday', 'wednesday', 'thursday', 'friday', 'saturday', 'sunday'] as const;
