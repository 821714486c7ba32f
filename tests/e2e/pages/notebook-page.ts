import { expect, type Download, type Locator, type Page } from "@playwright/test";

/** KaTeX writes zero-width spaces after sub- and superscripts; compare text without them. */
export function plainMath(text: string): string {
  return text.replace(/[\u200b\s]/g, "");
}

/** The derivation notebook. */
export class NotebookPage {
  constructor(private readonly page: Page) {}

  get id(): string {
    return new URL(this.page.url()).pathname.split("/").pop() ?? "";
  }

  /** The shared document's connection: connecting, saved/saving (editors), live (readers), offline, refused. */
  get connectionStatus(): Locator {
    return this.page.getByTestId("connection-status");
  }

  get equations(): Locator {
    return this.page.getByTestId("equations");
  }

  /** The ids of the notebook's cells, in order (`cell-<id>` test ids). */
  async cellIds(): Promise<string[]> {
    await this.expectOpen();
    return this.page.locator('[data-testid^="cell-"]').evaluateAll((cells) => cells.map((cell) => cell.getAttribute("data-testid") ?? ""));
  }

  async expectOpen(): Promise<void> {
    await expect(this.page.getByTestId("notebook")).toBeVisible();
  }

  /** Adds a row to a table cell and fills its cells (`{ Name: "theta1", Unit: "rad" }`). */
  async addRow(noun: "coordinate" | "parameter" | "input" | "definition", values: Record<string, string>): Promise<void> {
    const index = (await this.page.getByRole("textbox", { name: new RegExp(`^Name, ${noun} \\d+$`) }).count()) + 1;
    await this.page.getByRole("button", { name: `+ Add ${noun}` }).click();
    await expect(this.page.getByRole("textbox", { name: `Name, ${noun} ${index}`, exact: true })).toBeVisible();
    for (const [column, value] of Object.entries(values)) {
      if (column === "Expression") continue;
      await this.page.getByRole("textbox", { name: `${column}, ${noun} ${index}`, exact: true }).fill(value);
    }
    if (values.Expression !== undefined) await this.typeExpression(`Expression of ${values.Name}`, values.Expression);
  }

  /** Types into an expression editor (CodeMirror, built when it gets focus). */
  async typeExpression(label: string, text: string): Promise<void> {
    // Editors take typing once the shared document has arrived (until then the notebook is read-only).
    await expect(this.page.getByTestId("notebook-page")).not.toHaveAttribute("data-read-only", "true", { timeout: 20_000 });
    await this.page.getByRole("textbox", { name: label, exact: true }).click();
    const editor = this.page.locator(`.cm-content[aria-label="${label}"]`);
    await expect(editor).toBeFocused();
    await this.page.keyboard.type(text);
    await expect(editor).toHaveText(text);
  }

  /** Every edit of this page stored by the collaboration server. */
  async waitUntilSaved(): Promise<void> {
    await expect(this.connectionStatus).toHaveAttribute("data-state", "saved", { timeout: 20_000 });
  }

  /** The shared document has arrived and this person may edit it. */
  async waitUntilEditable(): Promise<void> {
    await this.waitUntilSaved();
    await expect(this.page.getByTestId("notebook-page")).not.toHaveAttribute("data-read-only", "true");
  }

  async evaluate(): Promise<void> {
    await this.page.getByRole("button", { name: /^Evaluat/ }).click();
    await this.waitForResults();
  }

  async waitForResults(): Promise<void> {
    await expect(this.page.getByTestId("evaluation-status")).toHaveAttribute("data-state", "current", { timeout: 45_000 });
    // Display math is typeset once it comes near the viewport (components/notebook/math.tsx): scroll to it, as a reader would.
    await this.equations.scrollIntoViewIfNeeded();
    await expect(this.equations.locator(".katex").first()).toBeVisible();
  }

  /** The typeset equations as plain text, one entry per equation. */
  async equationTexts(): Promise<string[]> {
    const items = this.equations.locator(".katex-display, .katex");
    await this.equations.scrollIntoViewIfNeeded();
    await expect(items.first()).toBeVisible();
    // Every equation typeset, not only the first.
    await expect(this.equations.locator(".hn-math-pending")).toHaveCount(0);
    return (await this.equations.locator(".katex-html").allTextContents()).map(plainMath);
  }

  async export(format: "Model file (.model.json)" | "LaTeX document (.tex)" | "Notebook archive (.notebook.zip)"): Promise<Download> {
    await this.page.getByRole("button", { name: "Export ▾" }).click();
    await expect(this.page.getByTestId("export-safety-note")).toContainText("Derived equations are a model");
    const downloading = this.page.waitForEvent("download");
    await this.page.getByRole("group", { name: "Export" }).getByRole("button", { name: format }).click();
    return downloading;
  }
}
