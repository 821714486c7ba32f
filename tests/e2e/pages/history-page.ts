import { expect, type Locator, type Page } from "@playwright/test";

/** A derivation's history: revisions, checkpoints, and the comparison of two revisions. */
export class HistoryPage {
  constructor(private readonly page: Page) {}

  async goto(derivationId: string): Promise<void> {
    await this.page.goto(`/derivations/${derivationId}/history`);
    await expect(this.page.getByRole("heading", { name: "History", level: 1 })).toBeVisible();
  }

  get revisions(): Locator {
    return this.page.getByTestId("revision");
  }

  revision(number: number): Locator {
    return this.page.locator(`[data-testid="revision"][data-number="${number}"]`);
  }

  /** Chooses two revisions in the form and opens their comparison. */
  async compare(from: number, to: number): Promise<void> {
    const form = this.page.getByRole("form", { name: "Compare two revisions" });
    await form.getByLabel("From").selectOption(String(from));
    await form.getByLabel("To").selectOption(String(to));
    await form.getByRole("button", { name: "Compare" }).click();
    await expect(this.page.getByTestId("compare-page")).toBeVisible();
  }

  async openReport(number: number): Promise<void> {
    await this.revision(number).getByRole("link", { name: "Report" }).click();
    await expect(this.page.getByTestId("report")).toBeVisible();
  }
}

/** The comparison of two revisions. */
export class ComparePage {
  constructor(private readonly page: Page) {}

  cell(kind: string): Locator {
    return this.page.locator(`[data-testid="cell-change"][data-kind="${kind}"]`);
  }

  parameterRow(name: string): Locator {
    return this.page.getByTestId("parameter-diff").getByRole("row").filter({ hasText: name });
  }

  equation(coordinate: string): Locator {
    return this.page.locator(`[data-testid="equation-change"][data-coordinate="${coordinate}"]`);
  }

  async waitForEquations(): Promise<void> {
    await expect(this.page.getByTestId("term-diff")).toBeVisible({ timeout: 45_000 });
  }
}
