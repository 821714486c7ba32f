import { expect, type Locator, type Page } from "@playwright/test";

/** The printable report of one revision. */
export class ReportPage {
  constructor(private readonly page: Page) {}

  get root(): Locator {
    return this.page.getByTestId("report");
  }

  /** A numbered section by its id: report-model, report-equations, report-approval… */
  section(id: string): Locator {
    return this.page.getByTestId(id);
  }

  async expectRendered(): Promise<void> {
    await expect(this.root).toBeVisible();
    await expect(this.root.locator(".katex").first()).toBeVisible();
    await expect(this.page.getByTestId("report-safety-note")).toContainText("Derived equations are a model");
  }
}
