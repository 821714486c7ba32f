import { readFileSync } from "node:fs";
import path from "node:path";
import { differenceCiede2000, filterDeficiencyDeuter, filterDeficiencyProt, filterDeficiencyTrit, parse, wcagContrast, type Color } from "culori";
import { describe, expect, it } from "vitest";
import { SERIES_COLOURS } from "@/components/notebook/simulation/chart";

/**
 * The chart series palette lives in app/globals.css beside the rest of the
 * theme. Checked here: every pair of series colours stays apart under normal
 * vision and under simulated protanopia, deuteranopia and tritanopia (full
 * severity, Machado, Oliveira & Fernandes, IEEE TVCG 15(6), 2009, as
 * implemented by culori), measured by CIEDE2000 (Sharma, Wu & Dalal, Color
 * Res. Appl. 30(1), 2005); each line has at least the 3:1 contrast WCAG 2.1
 * asks of graphical objects (success criterion 1.4.11) on paper and surface;
 * and no series colour is mistaken for the error red.
 */
const css = readFileSync(path.resolve("app/globals.css"), "utf8");

function block(selector: string): string {
  const start = css.indexOf(selector);
  expect(start, selector).toBeGreaterThanOrEqual(0);
  return css.slice(start, css.indexOf("}", start));
}
function variables(text: string): Record<string, string> {
  return Object.fromEntries([...text.matchAll(/--([a-z0-9-]+):\s*(#[0-9a-f]{6})\s*;/gi)].map((m) => [m[1]!, m[2]!.toLowerCase()]));
}

const themes = {
  light: variables(block(":root {")),
  dark: variables(block(':root[data-theme="dark"] {')),
  systemDark: variables(block(':root:not([data-theme="light"]) {')),
};
const palette = (theme: Record<string, string>) => Array.from({ length: SERIES_COLOURS }, (_, i) => theme[`series-${i + 1}`]!);
const distance = differenceCiede2000();
const visions: Record<string, (c: Color) => Color> = {
  normal: (c) => c,
  protanopia: filterDeficiencyProt(1),
  deuteranopia: filterDeficiencyDeuter(1),
  tritanopia: filterDeficiencyTrit(1),
};

describe("chart series palette", () => {
  it("defines the same six colours for the chosen and the system dark theme", () => {
    expect(palette(themes.light).every(Boolean)).toBe(true);
    expect(palette(themes.dark).every(Boolean)).toBe(true);
    expect(palette(themes.systemDark)).toEqual(palette(themes.dark));
  });

  describe.each(["light", "dark"] as const)("%s theme", (name) => {
    const theme = themes[name];
    const colours = palette(theme);

    it.each(Object.keys(visions))("keeps every pair apart under %s", (vision) => {
      const see = visions[vision]!;
      let closest = Infinity;
      for (let i = 0; i < colours.length; i++) {
        for (let j = i + 1; j < colours.length; j++) closest = Math.min(closest, distance(see(parse(colours[i]!)!), see(parse(colours[j]!)!)));
      }
      // ΔE00 of 12 is well past a just-noticeable difference (about 1) for thin lines; our own bar.
      expect(closest).toBeGreaterThan(12);
    });

    it("has 3:1 contrast against paper and surface (WCAG 2.1, 1.4.11)", () => {
      for (const colour of colours) {
        expect(wcagContrast(colour, theme.paper!)).toBeGreaterThanOrEqual(3);
        expect(wcagContrast(colour, theme.surface!)).toBeGreaterThanOrEqual(3);
      }
    });

    it("stays clear of the error red, so a series never reads as a warning", () => {
      for (const colour of colours) expect(distance(parse(colour)!, parse(theme.danger!)!)).toBeGreaterThan(10);
    });
  });
});
