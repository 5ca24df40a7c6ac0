import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useRepositories } from '../data-context';
import { queryKeys } from '../query-keys';
import { useDataInvalidation } from './useDataInvalidation';

/** Patients matching what was typed: name prefixes, clinic number or date of birth. */
export function usePatientSearch(query: string, options: { siteId?: string; limit?: number } = {}) {
  const { records } = useRepositories();
  useDataInvalidation();
  const trimmed = query.trim();
  return useQuery({
    queryKey: queryKeys.records.patientSearch(trimmed, options.siteId),
    queryFn: () => records.searchPatients(trimmed, options),
    enabled: trimmed.length > 0,
    placeholderData: keepPreviousData,
    networkMode: 'always',
  });
}
