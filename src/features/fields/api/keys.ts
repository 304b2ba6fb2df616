/** Query keys of the fields feature; everything lives under ['fields'] so one invalidation refreshes all. */
export const fieldsRootKey = ['fields'] as const;
