/**
 * Mentions in a comment's Markdown are written `@[Name](user id)`: the name as
 * it read when written, and the id the notification goes to. The comment box
 * inserts them from its autocomplete; the reader shows them as "@Name".
 */

const MENTION = /@\[([^\]\n]{1,120})\]\(([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12})\)/gi;

export interface Mention {
  name: string;
  userId: string;
}

/** The mentions of a body, each person once, in order of first mention. */
export function mentionsIn(body: string): Mention[] {
  const seen = new Set<string>();
  const found: Mention[] = [];
  for (const match of body.matchAll(MENTION)) {
    const userId = match[2]!.toLowerCase();
    if (seen.has(userId)) continue;
    seen.add(userId);
    found.push({ name: match[1]!, userId });
  }
  return found;
}

/** The token the comment box inserts for a member. */
export function mentionToken({ name, userId }: Mention): string {
  return `@[${name.replace(/[\]\n]/g, " ")}](${userId})`;
}

/** The body with mentions written as "@Name" (plain text: e-mails, notifications). */
export function withPlainMentions(body: string): string {
  return body.replace(MENTION, (_all, name: string) => `@${name}`);
}
