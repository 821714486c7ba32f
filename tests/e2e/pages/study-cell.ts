import { expect, type Locator, type Page } from "@playwright/test";

/** The notebook's parameter study cell: add it, set it up, run it, read its results. */
export class StudyCell {
  readonly cell: Locator;

  constructor(private readonly page: Page) {
    this.cell = page.locator("[data-kind='study']").last();
  }

  async add(): Promise<void> {
    await this.page.getByRole("button", { name: "Add cell", exact: true }).click();
    await this.page.getByRole("group", { name: "Cell kinds" }).getByRole("button", { name: "Parameter study", exact: true }).click();
    await expect(this.cell.getByTestId("study-settings")).toBeVisible();
  }

  /** Adds a grid parameter; its values start ±5 % around the Parameters cell's value unless given. */
  async addGridParameter(name: string, values?: string): Promise<void> {
    const count = await this.cell.getByTestId("study-parameter").count();
    await this.cell.getByRole("button", { name: "+ Add parameter" }).click();
    const entry = this.cell.getByTestId("study-parameter").nth(count);
    await entry.getByLabel("Parameter", { exact: true }).selectOption(name);
    if (values !== undefined) await entry.getByLabel(/^Values/).fill(values);
  }

  async run(): Promise<void> {
    await this.cell.getByTestId("study-run").click();
  }

  summary(): Locator {
    return this.cell.getByTestId("study-summary");
  }

  worstRow(name: string): Locator {
    return this.cell.getByTestId("study-worst-row").filter({ hasText: name });
  }
}
