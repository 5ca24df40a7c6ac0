// Saving from a screen: the edit is in IndexedDB with its Outbox entry when the mutation
// resolves, so a screen shows "Saved" only after onSuccess (by then the queries that could see
// the record have been read again).
import type { CollectionName, RecordFieldsInput } from '@fuselight/shared';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useCallback } from 'react';
import { useSession } from '../../auth/session-context';
import { useRepositories } from '../data-context';
import { refreshAfterWrite } from '../query-invalidation';
import type { EditContext } from '../records-repository';

/** Device id used for stamps in a browser that is not an enrolled tablet (development, desk). */
export const UNENROLLED_DEVICE_ID = 'unenrolled-browser';

/** Builds the context of an edit from the session; throws in words when nobody is signed in. */
export function useEditContext(): () => EditContext {
  const { user, deviceId } = useSession();
  return useCallback(() => {
    if (!user) throw new Error('Sign in before saving: nobody is signed in on this tablet');
    return { authorId: user.id, deviceId: deviceId ?? UNENROLLED_DEVICE_ID, nowMs: Date.now() };
  }, [user, deviceId]);
}

export function useCreateRecord<C extends CollectionName>(collection: C) {
  const { records } = useRepositories();
  const editContext = useEditContext();
  const queryClient = useQueryClient();
  return useMutation({
    networkMode: 'always',
    mutationFn: (fields: RecordFieldsInput<C>) => records.create(collection, fields, editContext()),
    onSuccess: (id) =>
      refreshAfterWrite(queryClient, { collections: [collection], recordIds: [id], outbox: true }),
  });
}

export function useUpdateRecord<C extends CollectionName>(collection: C) {
  const { records } = useRepositories();
  const editContext = useEditContext();
  const queryClient = useQueryClient();
  return useMutation({
    networkMode: 'always',
    mutationFn: (input: { id: string; fields: Partial<RecordFieldsInput<C>> }) =>
      records.update(collection, input.id, input.fields, editContext()),
    onSuccess: (_result, input) =>
      refreshAfterWrite(queryClient, {
        collections: [collection],
        recordIds: [input.id],
        outbox: true,
      }),
  });
}

export function useRemoveRecord(collection: CollectionName) {
  const { records } = useRepositories();
  const editContext = useEditContext();
  const queryClient = useQueryClient();
  return useMutation({
    networkMode: 'always',
    mutationFn: (id: string) => records.remove(collection, id, editContext()),
    onSuccess: (_result, id) =>
      refreshAfterWrite(queryClient, { collections: [collection], recordIds: [id], outbox: true }),
  });
}
