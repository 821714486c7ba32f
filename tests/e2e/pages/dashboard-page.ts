import { expect, type Page } from "@playwright/test";

/** A team's dashboard: the derivations table, new derivation and import. */
export class DashboardPage {
  constructor(private readonly page: Page) {}

  async openTeam(teamName: string): Promise<void> {
    await this.page.goto("/teams");
    await this.page.getByRole("link", { name: new RegExp(teamName) }).click();
    await expect(this.page.getByTestId("team-name")).toHaveText(teamName);
  }

  get table() {
    return this.page.getByTestId("derivations-table");
  }

  /** Narrows the table to titles containing `text` and waits for the answer. */
  async search(text: string): Promise<void> {
    await this.page.getByLabel("Search derivations").fill(text);
    await expect(this.page.getByTestId("derivations-total")).not.toContainText("updating");
  }

  /** Creates a derivation through the dialog and waits for its notebook. */
  async createDerivation(title: string, template = "Blank"): Promise<void> {
    await this.page.getByRole("button", { name: "New derivation" }).click();
    const dialog = this.page.getByRole("dialog", { name: "New derivation" });
    await dialog.getByRole("radio", { name: new RegExp(`^${template}`) }).check();
    await dialog.getByLabel("Title", { exact: true }).fill(title);
    await dialog.getByRole("button", { name: "Create" }).click();
    await expect(this.page).toHaveURL(/\/derivations\/[0-9a-f-]{36}$/);
  }

  /** Imports a model file or a notebook archive; resolves once the new derivation's notebook is open. */
  async importModelFile(path: string): Promise<void> {
    await this.page.getByRole("button", { name: "Import" }).click();
    const dialog = this.page.getByRole("dialog", { name: "Import a model file" });
    await dialog.getByLabel("Model file").setInputFiles(path);
    await dialog.getByRole("button", { name: "Import" }).click();
    await expect(this.page).toHaveURL(/\/derivations\/[0-9a-f-]{36}$/);
  }
}
