"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch } from "@/lib/api/fetcher";

interface SettingsAnswer {
  settings: { mentionEmails: boolean };
}

const settingsKey = ["account", "notification-settings"] as const;

/**
 * A person's own choice to receive an e-mail when someone mentions them in a
 * comment (on by default). It holds in every team; the in-app notification
 * always arrives.
 */
export function MentionEmailSetting() {
  const queryClient = useQueryClient();
  const query = useQuery({
    queryKey: settingsKey,
    queryFn: ({ signal }) => apiFetch<SettingsAnswer>("/api/account/notification-settings", { signal }),
  });
  const save = useMutation({
    mutationFn: (mentionEmails: boolean) => apiFetch<SettingsAnswer>("/api/account/notification-settings", { method: "PUT", body: { mentionEmails } }),
    onSuccess: (answer) => queryClient.setQueryData(settingsKey, answer),
  });
  const checked = save.isPending ? save.variables : (query.data?.settings.mentionEmails ?? true);
  return (
    <section className="space-y-2 rounded border border-line bg-surface p-4" aria-labelledby="notification-settings-heading">
      <h2 id="notification-settings-heading" className="text-lg font-semibold">
        Your notifications
      </h2>
      <label className="flex items-start gap-2 text-sm">
        <input
          type="checkbox"
          className="mt-1"
          checked={checked}
          disabled={query.isPending || save.isPending}
          data-testid="mention-emails"
          onChange={(event) => save.mutate(event.target.checked)}
        />
        <span>
          E-mail me when someone mentions me in a comment
          <span className="block text-xs text-muted">Applies in all your teams. Mentions always appear under the bell in the header.</span>
        </span>
      </label>
      {query.error || save.error ? (
        <p className="text-sm text-danger" role="alert">
          {(save.error ?? query.error)?.message}
        </p>
      ) : null}
    </section>
  );
}
