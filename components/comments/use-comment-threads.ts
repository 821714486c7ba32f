"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch } from "@/lib/api/fetcher";
import type { ThreadView, ThreadsAnswer } from "@/lib/comments/views";

export const commentThreadsKey = (derivationId: string) => ["comment-threads", derivationId] as const;

/** The derivation's threads, polled while the page is open so others' comments appear. */
export function useCommentThreads(derivationId: string) {
  return useQuery({
    queryKey: commentThreadsKey(derivationId),
    queryFn: ({ signal }) => apiFetch<ThreadsAnswer>(`/api/derivations/${derivationId}/comments`, { signal }),
    refetchInterval: 30_000,
    refetchOnWindowFocus: true,
  });
}

export type NewAnchor =
  | { kind: "text"; cellId: string; fieldPath: string; start: string; end: string; quote: string }
  | { kind: "term"; cellId: string; coordinate: string; termId: string; termText: string; termLatex: string };

type ThreadAnswer = { thread: ThreadView };

/** Every change answers the thread as it is now; it replaces the cached one. */
export function useCommentMutations(derivationId: string) {
  const queryClient = useQueryClient();
  const base = `/api/derivations/${derivationId}/comments`;
  const store = ({ thread }: ThreadAnswer) => {
    queryClient.setQueryData<ThreadsAnswer>(commentThreadsKey(derivationId), (answer) => {
      if (!answer) return answer;
      const exists = answer.threads.some((candidate) => candidate.id === thread.id);
      return {
        ...answer,
        threads: exists ? answer.threads.map((candidate) => (candidate.id === thread.id ? thread : candidate)) : [...answer.threads, thread],
      };
    });
  };
  return {
    start: useMutation({
      mutationFn: (input: { anchor: NewAnchor; body: string }) => apiFetch<ThreadAnswer>(base, { method: "POST", body: input }),
      onSuccess: store,
    }),
    reply: useMutation({
      mutationFn: ({ threadId, body }: { threadId: string; body: string }) => apiFetch<ThreadAnswer>(`${base}/${threadId}`, { method: "POST", body: { body } }),
      onSuccess: store,
    }),
    setStatus: useMutation({
      mutationFn: ({ threadId, status }: { threadId: string; status: "open" | "resolved" }) =>
        apiFetch<ThreadAnswer>(`${base}/${threadId}`, { method: "PATCH", body: { status } }),
      onSuccess: store,
    }),
    edit: useMutation({
      mutationFn: ({ threadId, commentId, body }: { threadId: string; commentId: string; body: string }) =>
        apiFetch<ThreadAnswer>(`${base}/${threadId}/${commentId}`, { method: "PATCH", body: { body } }),
      onSuccess: store,
    }),
    remove: useMutation({
      mutationFn: ({ threadId, commentId }: { threadId: string; commentId: string }) =>
        apiFetch<ThreadAnswer>(`${base}/${threadId}/${commentId}`, { method: "DELETE" }),
      onSuccess: store,
    }),
  };
}
