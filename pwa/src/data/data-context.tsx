// Which repositories the hooks use: the tablet's own by default; tests pass ones on their own
// fake-indexeddb database.
import { createContext, useContext, type ReactNode } from 'react';
import { outboxRepository, type OutboxRepository } from './outbox-repository';
import { recordsRepository, type RecordsRepository } from './records-repository';

export interface Repositories {
  records: RecordsRepository;
  outbox: OutboxRepository;
}

const RepositoriesContext = createContext<Repositories>({
  records: recordsRepository,
  outbox: outboxRepository,
});

export function RepositoriesProvider(props: { value: Repositories; children: ReactNode }) {
  return (
    <RepositoriesContext.Provider value={props.value}>
      {props.children}
    </RepositoriesContext.Provider>
  );
}

export function useRepositories(): Repositories {
  return useContext(RepositoriesContext);
}
