// Query keys for identity calls to the clinic server (people, sites, the Fleet). The records on
// the tablet have their own factory in pwa/src/data/query-keys.ts.
export const identityKeys = {
  all: ['identity'] as const,
  people: () => [...identityKeys.all, 'people'] as const,
  sites: () => [...identityKeys.all, 'sites'] as const,
  fleet: () => [...identityKeys.all, 'fleet'] as const,
  waitingChanges: (authorId: string) => [...identityKeys.all, 'waiting-changes', authorId] as const,
};
