// The tablet's data layer for screens: repositories, the query-key factory and hooks.
// Screens import from here (never from Dexie or db.ts).
export type { OutboxEntry, OutboxState } from './db';
export { subscribeDataChanges, type DataChange } from './data-events';
export { RepositoriesProvider, useRepositories, type Repositories } from './data-context';
export {
  RecordsRepository,
  recordsRepository,
  RecordNotFoundError,
  RecordValidationError,
  type EditContext,
  type ListFilter,
  type LocalRecord,
  type PlacementField,
} from './records-repository';
export {
  OutboxRepository,
  outboxRepository,
  type DiscardReceipt,
  type OutboxCounts,
} from './outbox-repository';
export { queryKeys } from './query-keys';
export { useRecord } from './hooks/useRecord';
export { useRecords, useRecordsByField } from './hooks/useRecordsByField';
export { usePatientSearch } from './hooks/usePatientSearch';
export { useOutboxCounts, useOutboxEntries } from './hooks/useOutbox';
export { STORAGE_FULL_WORDS, StorageFullError, isQuotaExceeded } from './storage-full';
export {
  UNENROLLED_DEVICE_ID,
  useCreateRecord,
  useEditContext,
  useRemoveRecord,
  useUpdateRecord,
} from './hooks/useRecordMutations';
