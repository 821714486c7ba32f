import { expect, type Locator, type Page } from "@playwright/test";

/** The notebook's simulation cell: add it, run it, read its results. */
export class SimulationCell {
  readonly cell: Locator;

  constructor(private readonly page: Page) {
    this.cell = page
      .locator("[data-cell-kind='simulation'], section, article")
      .filter({ has: page.getByTestId("simulation-settings") })
      .last();
  }

  async add(): Promise<void> {
    await this.page.getByRole("button", { name: "Add cell", exact: true }).click();
    await this.page.getByRole("group", { name: "Cell kinds" }).getByRole("button", { name: "Simulation", exact: true }).click();
    await expect(this.page.getByTestId("simulation-settings").last()).toBeVisible();
  }

  async setEndTime(value: string): Promise<void> {
    await this.page.getByLabel("End time (s)").last().fill(value);
  }

  async run(): Promise<void> {
    await this.page.getByTestId("simulation-run").last().click();
    await expect(this.page.getByTestId("simulation-results").last()).toBeVisible({ timeout: 45_000 });
  }

  /** A chart; with coordinates of several units, name the unit group too (`"m"`, `"rad"`). */
  chart(name: "coordinates" | "rates" | "phase" | "energy", unit?: string): Locator {
    return this.page.getByTestId(`chart-${name}${unit ? `-${unit}` : ""}`).last();
  }

  energyDrift(): Locator {
    return this.page.getByTestId("energy-drift-value").last();
  }
}
