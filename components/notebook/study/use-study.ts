"use client";
/**
 * The study routes as TanStack queries and mutations: the list of a cell's
 * studies, one study (polled while it runs, so partial results appear), and
 * starting and cancelling one.
 */
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch } from "@/lib/api/fetcher";
import { studyEnded, type StudyListItem, type StudyView } from "./types";

/** How often a running study is read again. */
export const STUDY_POLL_MS = 1000;

export const studiesKey = (derivationId: string, cellId: string) => ["derivations", derivationId, "studies", { cellId }] as const;
export const studyKey = (derivationId: string, studyId: string) => ["derivations", derivationId, "studies", studyId] as const;

export const studiesPath = (derivationId: string) => `/api/derivations/${derivationId}/studies`;
export const studyPath = (derivationId: string, studyId: string) => `${studiesPath(derivationId)}/${studyId}`;

export function useStudyList(derivationId: string, cellId: string) {
  return useQuery({
    queryKey: studiesKey(derivationId, cellId),
    queryFn: ({ signal }) => apiFetch<{ studies: StudyListItem[] }>(`${studiesPath(derivationId)}?cellId=${encodeURIComponent(cellId)}`, { signal }),
  });
}

export function useStudy(derivationId: string, studyId: string | null, pollMs = STUDY_POLL_MS) {
  return useQuery({
    queryKey: studyKey(derivationId, studyId ?? ""),
    queryFn: ({ signal }) => apiFetch<{ study: StudyView }>(studyPath(derivationId, studyId!), { signal }),
    enabled: studyId !== null,
    // Partial results while it runs; an ended study never changes again.
    refetchInterval: (query) => {
      const state = query.state.data?.study.state;
      return state && studyEnded(state) ? false : pollMs;
    },
  });
}

/** Queues a study of the cell as the server holds it; resolves with the new study. */
export function useStartStudy(derivationId: string, cellId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => apiFetch<{ study: StudyView }>(studiesPath(derivationId), { method: "POST", body: { cellId } }),
    onSuccess: async ({ study }) => {
      queryClient.setQueryData(studyKey(derivationId, study.id), { study });
      await queryClient.invalidateQueries({ queryKey: studiesKey(derivationId, cellId) });
    },
  });
}

export function useCancelStudy(derivationId: string, cellId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (studyId: string) => apiFetch<{ study: StudyView }>(`${studyPath(derivationId, studyId)}/cancel`, { method: "POST" }),
    onSuccess: async ({ study }) => {
      queryClient.setQueryData(studyKey(derivationId, study.id), { study });
      await queryClient.invalidateQueries({ queryKey: studiesKey(derivationId, cellId) });
    },
  });
}
