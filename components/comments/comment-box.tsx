"use client";

/**
 * A comment's text box with @mention autocomplete: typing "@" and part of a
 * team member's name lists matches; Enter, Tab or a click inserts the name.
 * Ctrl+Enter (⌘+Enter) sends.
 */
import { useId, useMemo, useRef, useState } from "react";
import { flushSync } from "react-dom";
import { Button } from "@/components/ui/button";
import type { Mention } from "@/lib/comments/mentions";
import type { MemberOption } from "@/lib/comments/views";
import { COMMENT_BODY_LIMIT } from "@/lib/validation/comments";
import { fromEditable, mentionQueryAt, toEditable } from "./mention-text";

export interface CommentBoxProps {
  members: readonly MemberOption[];
  label: string;
  submitLabel: string;
  /** Stored body to start from (editing). */
  initialBody?: string;
  busy?: boolean;
  error?: string | null;
  autoFocus?: boolean;
  onSubmit: (body: string) => void;
  onCancel?: () => void;
}

export function CommentBox({ members, label, submitLabel, initialBody = "", busy, error, autoFocus, onSubmit, onCancel }: CommentBoxProps) {
  const initial = useMemo(() => toEditable(initialBody), [initialBody]);
  const [text, setText] = useState(initial.text);
  const [picked, setPicked] = useState<Mention[]>(initial.picked);
  const [query, setQuery] = useState<{ start: number; query: string } | null>(null);
  const [highlight, setHighlight] = useState(0);
  const areaRef = useRef<HTMLTextAreaElement>(null);
  const listId = useId();
  const errorId = useId();

  const matches = useMemo(() => {
    if (!query) return [];
    const needle = query.query.toLowerCase();
    return members
      .filter(
        (member) =>
          member.name
            .toLowerCase()
            .split(/\s+/)
            .some((part) => part.startsWith(needle)) || member.name.toLowerCase().startsWith(needle),
      )
      .slice(0, 6);
  }, [members, query]);

  function track(value: string, caret: number) {
    setText(value);
    setQuery(mentionQueryAt(value, caret));
    setHighlight(0);
  }

  function insert(member: MemberOption) {
    if (!query) return;
    const caret = areaRef.current?.selectionStart ?? text.length;
    const next = `${text.slice(0, query.start)}@${member.name} ${text.slice(caret)}`;
    // The new text is committed at once and the caret put after the mention before the next keystroke
    // (a frame later, keys typed right after the pick landed where React's value update left the caret).
    flushSync(() => {
      setText(next);
      setPicked((current) => [...current.filter((mention) => mention.userId !== member.id), { name: member.name, userId: member.id }]);
      setQuery(null);
    });
    const position = query.start + member.name.length + 2;
    areaRef.current?.focus();
    areaRef.current?.setSelectionRange(position, position);
  }

  function submit() {
    const body = fromEditable(text, picked).trim();
    if (body.length > 0 && !busy) onSubmit(body);
  }

  const open = matches.length > 0;
  return (
    <form
      className="space-y-1.5"
      onSubmit={(event) => {
        event.preventDefault();
        submit();
      }}
    >
      <div className="relative">
        <textarea
          ref={areaRef}
          aria-label={label}
          aria-describedby={error ? errorId : undefined}
          aria-autocomplete="list"
          aria-controls={open ? listId : undefined}
          aria-expanded={open}
          role="combobox"
          className="block min-h-[4.5rem] w-full resize-y rounded border border-line bg-paper px-2 py-1.5 text-sm text-ink focus:border-action focus:outline-none"
          placeholder="Write a comment; @ mentions a team member"
          value={text}
          maxLength={COMMENT_BODY_LIMIT}
          autoFocus={autoFocus}
          data-testid="comment-box"
          onChange={(event) => track(event.target.value, event.target.selectionStart)}
          onKeyDown={(event) => {
            if (open && (event.key === "ArrowDown" || event.key === "ArrowUp")) {
              event.preventDefault();
              setHighlight((index) => (index + (event.key === "ArrowDown" ? 1 : matches.length - 1)) % matches.length);
            } else if (open && (event.key === "Enter" || event.key === "Tab") && !event.ctrlKey && !event.metaKey) {
              event.preventDefault();
              insert(matches[highlight] ?? matches[0]!);
            } else if (open && event.key === "Escape") {
              event.preventDefault();
              event.stopPropagation();
              setQuery(null);
            } else if (event.key === "Enter" && (event.ctrlKey || event.metaKey)) {
              event.preventDefault();
              submit();
            }
          }}
        />
        {open ? (
          <ul
            id={listId}
            role="listbox"
            aria-label="Team members"
            className="absolute left-0 right-0 top-full z-50 mt-1 max-h-48 overflow-auto rounded border border-line bg-surface py-1 text-sm shadow-lg"
          >
            {matches.map((member, index) => (
              <li
                key={member.id}
                role="option"
                aria-selected={index === highlight}
                className={index === highlight ? "cursor-pointer bg-action-soft px-2 py-1" : "cursor-pointer px-2 py-1 hover:bg-sunken"}
                onMouseDown={(event) => {
                  event.preventDefault();
                  insert(member);
                }}
              >
                {member.name}
              </li>
            ))}
          </ul>
        ) : null}
      </div>
      {error ? (
        <p id={errorId} className="text-xs text-danger" role="alert">
          {error}
        </p>
      ) : null}
      <div className="flex items-center gap-2">
        <Button type="submit" variant="primary" size="sm" disabled={busy || text.trim().length === 0}>
          {busy ? "Sending…" : submitLabel}
        </Button>
        {onCancel ? (
          <Button size="sm" variant="ghost" onClick={onCancel}>
            Cancel
          </Button>
        ) : null}
        <span className="ml-auto text-xs text-muted">Ctrl+Enter sends</span>
      </div>
    </form>
  );
}
