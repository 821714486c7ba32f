/**
 * Note cells: Markdown with $inline$ and $$display$$ math, rendered to HTML
 * and sanitized before it reaches the page.
 */
import { Marked, type TokenizerAndRendererExtension } from "marked";
import DOMPurify from "dompurify";
import { NOTE_MAX_EXPAND, renderLatex } from "./katex-render";

interface MathToken {
  type: "mathBlock" | "mathInline";
  raw: string;
  text: string;
  display: boolean;
}

const mathBlock: TokenizerAndRendererExtension = {
  name: "mathBlock",
  level: "block",
  start: (src) => {
    const index = src.indexOf("$$");
    return index < 0 ? undefined : index;
  },
  tokenizer(src) {
    const match = /^\$\$([\s\S]+?)\$\$[ \t]*(?:\n|$)/.exec(src);
    if (match) return { type: "mathBlock", raw: match[0], text: match[1]!.trim(), display: true } satisfies MathToken;
    return undefined;
  },
  renderer: (token) => `<div class="hn-math-display">${renderLatex((token as unknown as MathToken).text, true, NOTE_MAX_EXPAND, "note")}</div>\n`,
};

const mathInline: TokenizerAndRendererExtension = {
  name: "mathInline",
  level: "inline",
  start: (src) => {
    const index = src.search(/(?<!\\)\$/);
    return index < 0 ? undefined : index;
  },
  tokenizer(src) {
    const display = /^\$\$([^$]+?)\$\$/.exec(src);
    if (display) return { type: "mathInline", raw: display[0], text: display[1]!.trim(), display: true } satisfies MathToken;
    // $…$ with no space just inside the dollars, so "costs $5 and $6" stays text.
    const inline = /^\$(?![\s$])((?:\\\$|[^$\n])+?)(?<!\s)\$(?!\d)/.exec(src);
    if (inline) return { type: "mathInline", raw: inline[0], text: inline[1]!, display: false } satisfies MathToken;
    return undefined;
  },
  renderer: (token) => {
    const math = token as unknown as MathToken;
    const html = renderLatex(math.text, math.display, NOTE_MAX_EXPAND, "note");
    return math.display ? `<span class="hn-math-display">${html}</span>` : html;
  },
};

const markdown = new Marked({
  gfm: true,
  breaks: false,
  async: false,
  extensions: [mathBlock, mathInline],
  renderer: {
    // A note sits under the page's h1 and its cell's h3: its "# Heading" is an h4 (down to h6),
    // so the page keeps one h1 and an outline that follows the layout. The class keeps the look.
    heading({ tokens, depth }) {
      const level = Math.min(6, depth + 3);
      return `<h${level} class="hn-note-h${depth}">${this.parser.parseInline(tokens)}</h${level}>\n`;
    },
  },
});

/**
 * Sanitized HTML for a note. Needs a DOM (the browser, or jsdom in tests);
 * without one it returns null and the caller shows the source text.
 */
export function renderNoteHtml(source: string): string | null {
  if (typeof window === "undefined" || !DOMPurify.isSupported) return null;
  const html = markdown.parse(source, { async: false });
  const fragment = DOMPurify.sanitize(html, {
    FORBID_TAGS: ["style", "form", "input", "button", "textarea", "select"],
    FORBID_ATTR: ["srcset"],
    RETURN_DOM_FRAGMENT: true,
  });
  // Images only from this site's file store (sketches attached to the derivation): an
  // outside address would tell a third party who opened the note, and when.
  for (const image of Array.from(fragment.querySelectorAll("img"))) {
    if (!isAttachedImage(image.getAttribute("src") ?? "")) image.replaceWith(document.createTextNode(image.getAttribute("alt") ?? ""));
  }
  const holder = document.createElement("div");
  holder.appendChild(fragment);
  return holder.innerHTML;
}

/** A same-origin path to an attached file: `/api/files/<id>`. */
export function isAttachedImage(src: string): boolean {
  return /^\/api\/files\/[0-9a-fA-F-]{36}$/.test(src.trim());
}
