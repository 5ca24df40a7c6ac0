// TanStack Query hooks for the charting screens. Keys come from chartingKeys (built on the
// data layer's queryKeys root); any committed write to a collection the charting queries read
// refreshes them, because a visit's bundle spans many collections.
import type { SectionCollectionName } from '@fuselight/shared';
import { keepPreviousData, queryOptions, useQuery, useQueryClient } from '@tanstack/react-query';
import { useCallback, useEffect, useMemo } from 'react';
import { useRepositories } from '../data-context';
import { subscribeDataChanges } from '../data-events';
import { queryKeys } from '../query-keys';
import type { LocalRecord, RecordsRepository } from '../records-repository';
import { ChartingRepository } from './charting-repository';

export const chartingKeys = {
  all: () => [...queryKeys.all, 'charting'] as const,
  today: (siteId: string, date: string) => [...chartingKeys.all(), 'today', siteId, date] as const,
  search: (query: string) => [...chartingKeys.all(), 'search', query] as const,
  patient: (patientId: string) => [...chartingKeys.all(), 'patient', patientId] as const,
  patientVisits: (patientId: string) =>
    [...chartingKeys.all(), 'patientVisits', patientId] as const,
  patientSections: (patientId: string, collections: readonly string[]) =>
    [...chartingKeys.all(), 'patientSections', patientId, collections.join(',')] as const,
  visit: (visitId: string) => [...chartingKeys.all(), 'visit', visitId] as const,
} as const;

const repositories = new WeakMap<RecordsRepository, ChartingRepository>();

/** The charting repository on the records repository in use (the tablet's, or a test's). */
export function useCharting(): ChartingRepository {
  const { records } = useRepositories();
  return useMemo(() => {
    let charting = repositories.get(records);
    if (!charting) {
      charting = new ChartingRepository(records);
      repositories.set(records, charting);
    }
    return charting;
  }, [records]);
}

function useChartingInvalidation(): void {
  const queryClient = useQueryClient();
  useEffect(
    () =>
      subscribeDataChanges((change) => {
        if (change.collections.length === 0) return;
        void queryClient.invalidateQueries({ queryKey: chartingKeys.all() });
      }),
    [queryClient],
  );
}

export function useTodaysVisits(siteId: string | null, date: string) {
  const charting = useCharting();
  useChartingInvalidation();
  return useQuery({
    queryKey: chartingKeys.today(siteId ?? '', date),
    queryFn: () => charting.todaysVisits(siteId as string, date),
    enabled: siteId !== null,
    networkMode: 'always',
  });
}

/** The Today search's query, shared by the hook and by the keystroke that starts it early. */
function patientLookupOptions(charting: ChartingRepository, trimmed: string) {
  return queryOptions({
    queryKey: chartingKeys.search(trimmed),
    queryFn: () => charting.searchPatients(trimmed),
    networkMode: 'always',
  });
}

const NO_PATIENTS: LocalRecord<'patient'>[] = [];

export function usePatientLookup(query: string) {
  const charting = useCharting();
  useChartingInvalidation();
  const trimmed = query.trim();
  return useQuery({
    ...patientLookupOptions(charting, trimmed),
    enabled: trimmed.length > 0,
    // An emptied box is a search with no results, known at once. While the next query runs,
    // the rows kept on screen are then the previous query's only while it is being typed or
    // corrected, never those of a query the person cleared away.
    initialData: trimmed === '' ? NO_PATIENTS : undefined,
    placeholderData: keepPreviousData,
  });
}

/**
 * Starts a typed query's search from the keystroke itself, before React renders it, so that its
 * answer (from memory, a few microtasks away) reaches the query cache in the keystroke's own task
 * (the query hook then finds it there, or in flight, rather than searching again).
 */
export function usePatientLookupPrefetch(): (query: string) => void {
  const charting = useCharting();
  const queryClient = useQueryClient();
  return useCallback(
    (query: string) => {
      const trimmed = query.trim();
      if (trimmed !== '') void queryClient.prefetchQuery(patientLookupOptions(charting, trimmed));
    },
    [charting, queryClient],
  );
}

/**
 * Loads the patient search's directory in idle time once `ready` (the screen's first content is
 * on screen), so that the first search is answered from memory; a search typed before that
 * waits for the load instead.
 */
export function usePatientLookupWarmup(ready: boolean): void {
  const charting = useCharting();
  useEffect(() => {
    if (!ready) return;
    const warm = () => charting.warmPatientSearch();
    if (typeof requestIdleCallback === 'function') {
      const handle = requestIdleCallback(warm, { timeout: 2_000 });
      return () => cancelIdleCallback(handle);
    }
    const handle = setTimeout(warm, 200);
    return () => clearTimeout(handle);
  }, [charting, ready]);
}

export function usePatient(patientId: string | undefined) {
  const charting = useCharting();
  useChartingInvalidation();
  return useQuery({
    queryKey: chartingKeys.patient(patientId ?? ''),
    queryFn: () => charting.patient(patientId as string),
    enabled: Boolean(patientId),
    networkMode: 'always',
  });
}

export function usePatientVisits(patientId: string | undefined) {
  const charting = useCharting();
  useChartingInvalidation();
  return useQuery({
    queryKey: chartingKeys.patientVisits(patientId ?? ''),
    queryFn: () => charting.patientVisits(patientId as string),
    enabled: Boolean(patientId),
    networkMode: 'always',
  });
}

export function usePatientSections(
  patientId: string | undefined,
  collections: readonly SectionCollectionName[],
) {
  const charting = useCharting();
  useChartingInvalidation();
  return useQuery({
    queryKey: chartingKeys.patientSections(patientId ?? '', collections),
    queryFn: () => charting.patientSections(patientId as string, collections),
    enabled: Boolean(patientId),
    networkMode: 'always',
  });
}

export function useVisitBundle(visitId: string | undefined) {
  const charting = useCharting();
  useChartingInvalidation();
  return useQuery({
    queryKey: chartingKeys.visit(visitId ?? ''),
    queryFn: () => charting.visitBundle(visitId as string),
    enabled: Boolean(visitId),
    networkMode: 'always',
  });
}
