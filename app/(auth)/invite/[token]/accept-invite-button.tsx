"use client";

import { useMutation } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { Button } from "@/components/ui/button";
import { Notice } from "@/components/ui/notice";
import { apiFetch } from "@/lib/api/fetcher";

export function AcceptInviteButton({ token }: { token: string }) {
  const router = useRouter();
  const accept = useMutation({
    mutationFn: () => apiFetch<{ teamId: string }>(`/api/invites/${encodeURIComponent(token)}/accept`, { method: "POST" }),
    onSuccess: ({ teamId }) => {
      router.replace(`/teams/${teamId}`);
      router.refresh();
    },
  });
  return (
    <div className="space-y-3">
      {accept.error ? <Notice tone="error">{accept.error.message}</Notice> : null}
      <Button variant="primary" onClick={() => accept.mutate()} disabled={accept.isPending}>
        {accept.isPending ? "Joining…" : "Accept and join the team"}
      </Button>
    </div>
  );
}
