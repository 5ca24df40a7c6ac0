// TanStack Query hooks for the admin screens, each call made as the signed-in admin.
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { ClinicSettingsChange } from '@fuselight/shared';
import type { NewPerson, NewSite, PersonChange } from '../../auth/identity-api';
import { useAuthActions } from '../../auth/useAuthActions';
import { queryKeys } from '../../data/query-keys';

export function useSites() {
  const { api, asActivePerson } = useAuthActions();
  return useQuery({
    queryKey: queryKeys.identity.sites(),
    queryFn: () => asActivePerson((t) => api.listSites(t)),
  });
}

export function usePeople() {
  const { api, asActivePerson } = useAuthActions();
  return useQuery({
    queryKey: queryKeys.identity.people(),
    queryFn: () => asActivePerson((t) => api.listPeople(t)),
  });
}

export function useFleet() {
  const { api, asActivePerson } = useAuthActions();
  return useQuery({
    queryKey: queryKeys.identity.fleet(),
    queryFn: () => asActivePerson((t) => api.listDevices(t)),
    refetchInterval: 30_000,
  });
}

export function useInvitePerson() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: (person: NewPerson) => asActivePerson((t) => api.invitePerson(t, person)),
    onSuccess: () => client.invalidateQueries({ queryKey: queryKeys.identity.people() }),
  });
}

export function useChangePerson() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ id, change }: { id: string; change: PersonChange }) =>
      asActivePerson((t) => api.changePerson(t, id, change)),
    onSuccess: () => client.invalidateQueries({ queryKey: queryKeys.identity.people() }),
  });
}

export function useAddSite() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: (site: NewSite) => asActivePerson((t) => api.addSite(t, site)),
    onSuccess: () => client.invalidateQueries({ queryKey: queryKeys.identity.sites() }),
  });
}

export function useChangeSite() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ id, change }: { id: string; change: Partial<NewSite> }) =>
      asActivePerson((t) => api.changeSite(t, id, change)),
    onSuccess: () => client.invalidateQueries({ queryKey: queryKeys.identity.sites() }),
  });
}

export function useRegisterTablet() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: (tablet: { label: string; siteIds: string[] }) =>
      asActivePerson((t) => api.registerDevice(t, tablet)),
    onSuccess: () => client.invalidateQueries({ queryKey: queryKeys.identity.fleet() }),
  });
}

export function useTabletAction() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ id, action }: { id: string; action: 'revoke' | 'retire' }) =>
      asActivePerson((t) =>
        action === 'revoke' ? api.revokeDevice(t, id) : api.retireDevice(t, id),
      ),
    onSuccess: () => client.invalidateQueries({ queryKey: queryKeys.identity.fleet() }),
  });
}

export function useChangeTabletSites() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ id, siteIds }: { id: string; siteIds: string[] }) =>
      asActivePerson((t) => api.changeDeviceSites(t, id, siteIds)),
    onSuccess: () => client.invalidateQueries({ queryKey: queryKeys.identity.fleet() }),
  });
}

export function useClinicSettings() {
  const { api, asActivePerson } = useAuthActions();
  return useQuery({
    queryKey: queryKeys.identity.clinicSettings(),
    queryFn: () => asActivePerson((t) => api.clinicSettings(t)),
  });
}

export function useChangeClinicSettings() {
  const { api, asActivePerson } = useAuthActions();
  const client = useQueryClient();
  return useMutation({
    mutationFn: (change: ClinicSettingsChange) =>
      asActivePerson((t) => api.changeClinicSettings(t, change)),
    onSuccess: (settings) => client.setQueryData(queryKeys.identity.clinicSettings(), settings),
  });
}
