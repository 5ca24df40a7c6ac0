// TanStack Query hooks for the charting screens. Keys come from queryKeys.charting; a committed
// write re-runs only the queries that could see what it wrote (data/query-invalidation.ts). A
// visit's bundle is put together from one query per collection it reads, so a Section's write
// re-reads that Section alone.
import type { SectionCollectionName } from '@fuselight/shared';
import {
  type QueryObserverResult,
  keepPreviousData,
  queryOptions,
  useQueries,
  useQuery,
  useQueryClient,
} from '@tanstack/react-query';
import { useCallback, useEffect, useMemo } from 'react';
import { useRepositories } from '../data-context';
import { useDataInvalidation } from '../hooks/useDataInvalidation';
import { queryKeys } from '../query-keys';
import type { LocalRecord, RecordsRepository } from '../records-repository';
import {
  ChartingRepository,
  VISIT_PART_COLLECTIONS,
  type VisitBundle,
  type VisitParts,
  assembleVisitBundle,
} from './charting-repository';

const chartingKeys = queryKeys.charting;

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

export function useTodaysVisits(siteId: string | null, date: string) {
  const charting = useCharting();
  useDataInvalidation();
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
  useDataInvalidation();
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
  useDataInvalidation();
  return useQuery({
    queryKey: chartingKeys.patient(patientId ?? ''),
    queryFn: () => charting.patient(patientId as string),
    enabled: Boolean(patientId),
    networkMode: 'always',
  });
}

export function usePatientVisits(patientId: string | undefined) {
  const charting = useCharting();
  useDataInvalidation();
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
  useDataInvalidation();
  return useQuery({
    queryKey: chartingKeys.patientSections(patientId ?? '', collections),
    queryFn: () => charting.patientSections(patientId as string, collections),
    enabled: Boolean(patientId),
    networkMode: 'always',
  });
}

/** What useVisitBundle gives a screen: the bundle once read, and how the reading went. */
export type VisitBundleResult =
  | { isPending: true; isError: false; data: undefined; error: null }
  | { isPending: false; isError: true; data: VisitBundle | null | undefined; error: Error }
  /** data is null when the tablet does not hold the visit. */
  | { isPending: false; isError: false; data: VisitBundle | null; error: null };

interface PartsResult {
  parts: VisitParts;
  isPending: boolean;
  error: Error | null;
}

function combineParts(results: QueryObserverResult<LocalRecord[]>[]): PartsResult {
  const parts: Record<string, LocalRecord[] | undefined> = {};
  VISIT_PART_COLLECTIONS.forEach((collection, index) => {
    parts[collection] = results[index]?.data;
  });
  return {
    parts: parts as VisitParts,
    isPending: results.some((result) => result.isPending),
    error: results.find((result) => result.error)?.error ?? null,
  };
}

/**
 * A visit with its patient, Sections and Addenda, read as one query per collection (the visit,
 * its patient, each Section collection, the Addenda), so that a write re-reads only its part.
 */
export function useVisitBundle(visitId: string | undefined): VisitBundleResult {
  const charting = useCharting();
  useDataInvalidation();
  const id = visitId ?? '';
  const visit = useQuery({
    queryKey: chartingKeys.visitRecord(id),
    queryFn: () => charting.visit(id),
    enabled: Boolean(visitId),
    networkMode: 'always',
  });
  const patientId = visit.data?.fields.patientId;
  const patient = useQuery({
    queryKey: chartingKeys.patient(patientId ?? ''),
    queryFn: () => charting.patient(patientId as string),
    enabled: Boolean(patientId),
    networkMode: 'always',
  });
  const parts = useQueries({
    queries: VISIT_PART_COLLECTIONS.map((collection) => ({
      queryKey: chartingKeys.visitPart(id, collection),
      queryFn: (): Promise<LocalRecord[]> => charting.visitPart(id, collection),
      enabled: Boolean(visitId),
      networkMode: 'always' as const,
    })),
    combine: combineParts,
  });
  const data = useMemo(() => {
    if (visit.data === undefined) return undefined;
    if (visit.data === null) return null;
    if (patient.isPending || parts.isPending) return undefined;
    return assembleVisitBundle(visit.data, patient.data ?? null, parts.parts);
  }, [visit.data, patient.data, patient.isPending, parts]);
  const error = visit.error ?? patient.error ?? parts.error;
  if (error !== null) return { isPending: false, isError: true, data, error };
  if (data === undefined) return { isPending: true, isError: false, data, error: null };
  return { isPending: false, isError: false, data, error: null };
}
