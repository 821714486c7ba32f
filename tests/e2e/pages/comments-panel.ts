import { expect, type Locator, type Page } from "@playwright/test";

/** The notebook's comments side panel and the term and cell counts it drives. */
export class CommentsPanel {
  constructor(private readonly page: Page) {}

  get panel(): Locator {
    return this.page.getByTestId("comments-panel");
  }

  get threads(): Locator {
    return this.panel.getByTestId("comment-thread");
  }

  async open(): Promise<void> {
    if (!(await this.panel.isVisible())) await this.page.getByTestId("comments-button").click();
    await expect(this.panel).toBeVisible();
  }

  /** Clicks a term of the equations (the n-th term KaTeX marked with data-term). */
  async chooseTerm(index: number): Promise<Locator> {
    const term = this.page.getByTestId("equations").locator("[data-term]").nth(index);
    await term.scrollIntoViewIfNeeded();
    await term.click();
    await expect(this.panel).toBeVisible();
    return term;
  }

  /** Types a comment in the open box, choosing `mention` from the autocomplete after "@". */
  async write(text: string, mention?: { typed: string; name: string }): Promise<void> {
    const box = this.panel.getByTestId("comment-box").first();
    await box.click();
    if (mention) {
      await this.page.keyboard.type(`@${mention.typed}`);
      await this.panel.getByRole("option", { name: mention.name }).click();
    }
    await this.page.keyboard.type(text);
  }
}
