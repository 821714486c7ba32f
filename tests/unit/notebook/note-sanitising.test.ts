// @vitest-environment jsdom
import { describe, expect, it } from "vitest";
import { renderLatex } from "@/components/notebook/katex-render";
import { renderNoteHtml } from "@/components/notebook/markdown";

/** Every element and attribute of rendered HTML, to look for anything that could run. */
function inspect(html: string): { tags: Set<string>; attributes: string[] } {
  const holder = document.createElement("div");
  holder.innerHTML = html;
  const tags = new Set<string>();
  const attributes: string[] = [];
  for (const element of Array.from(holder.querySelectorAll("*"))) {
    tags.add(element.tagName.toLowerCase());
    for (const attribute of Array.from(element.attributes)) attributes.push(`${attribute.name}=${attribute.value}`);
  }
  return { tags, attributes };
}

function expectInert(html: string): void {
  const { tags, attributes } = inspect(html);
  for (const tag of ["script", "iframe", "object", "embed", "style", "form", "input", "button", "base", "meta", "link"]) expect(tags.has(tag), tag).toBe(false);
  for (const attribute of attributes) {
    expect(attribute, attribute).not.toMatch(/^on/i);
    expect(attribute, attribute).not.toMatch(/javascript:|vbscript:|data:text\/html/i);
  }
}

describe("a note's Markdown is sanitised", () => {
  const attacks = [
    "<script>alert(1)</script>",
    '<img src="/api/files/0b6a3c1e-58d2-4f0e-9a55-3f7c2b1d9e10" onerror="alert(1)">',
    '<a href="javascript:alert(1)">release notes</a>',
    "[release notes](javascript:alert(1))",
    "[release notes](JaVaScRiPt:alert(1))",
    '<iframe src="https://attacker.example"></iframe>',
    '<object data="https://attacker.example/x.swf"></object><embed src="x">',
    "<style>body{display:none}</style>",
    '<form action="https://attacker.example"><input name="password"><button>Go</button></form>',
    '<svg><script>alert(1)</script><a xlink:href="javascript:alert(1)"><text>x</text></a></svg>',
    "<math><mtext><table><mglyph><style><img src=x onerror=alert(1)>",
    '<div onmouseover="alert(1)">hover</div>',
    '<base href="https://attacker.example/">',
  ];

  it.each(attacks)("leaves nothing that runs: %s", (source) => {
    const html = renderNoteHtml(source);
    expect(html).not.toBeNull();
    expectInert(html!);
  });

  it("keeps ordinary Markdown and links", () => {
    const html = renderNoteHtml("Rated load **2 t**; see [the rig sheet](https://kestrel.example/rigs/7).")!;
    expect(html).toContain("<strong>2 t</strong>");
    expect(html).toContain('href="https://kestrel.example/rigs/7"');
  });
});

describe("KaTeX in notes trusts nothing", () => {
  it("refuses links and HTML commands typed in a note", () => {
    for (const math of [
      "$\\href{javascript:alert(1)}{x}$",
      "$\\url{javascript:alert(1)}$",
      "$\\htmlClass{evil}{x}$",
      "$\\htmlStyle{position:fixed}{x}$",
      "$\\htmlId{x}{y}$",
    ]) {
      const html = renderNoteHtml(`Drag ${math} here`)!;
      expectInert(html);
      expect(html).not.toContain("<a ");
      // Refused commands show as their source text in the error colour, never as attributes.
      const attributes = inspect(html).attributes.join(" ");
      expect(attributes).not.toMatch(/evil|position:\s*fixed|id=x/);
    }
  });

  it("does not give a note the engine's term marks either", () => {
    const note = renderNoteHtml("$\\htmlData{term=t1}{x}$")!;
    expect(note).not.toContain("data-term");
  });

  it("still renders the engine's term marks, and only those", () => {
    expect(renderLatex("\\htmlData{term=t1}{m \\ddot{x}}")).toContain('data-term="t1"');
    expect(inspect(renderLatex("\\htmlData{onclick=alert(1)}{x}")).attributes.join(" ")).not.toMatch(/onclick/);
    expect(renderLatex("\\href{https://attacker.example}{x}")).not.toContain("<a ");
  });
});
