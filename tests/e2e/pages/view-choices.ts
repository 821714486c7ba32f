import { expect, type Locator, type Page } from "@playwright/test";

/** A person's own view of a notebook: equation form, equilibrium, and their own simulation. */
export class ViewChoices {
  constructor(private readonly page: Page) {}

  get form(): Locator {
    return this.page.getByRole("combobox", { name: "Form" });
  }

  get equilibrium(): Locator {
    return this.page.getByRole("combobox", { name: "Equilibrium" });
  }

  /** The linearization cell's body. */
  get linearization(): Locator {
    return this.page.locator("[data-kind='linearization']");
  }

  get ownSimulation(): Locator {
    return this.page.getByTestId("own-simulation");
  }

  /** Forgets this person's stored view of the derivation, so a run starts from the document's settings. */
  async reset(derivationId: string): Promise<void> {
    const response = await this.page.request.put(`/api/derivations/${derivationId}/view-preferences`, {
      data: { preferences: { schemaVersion: 1, cells: {} } },
    });
    expect(response.status()).toBe(200);
  }

  /** Opens the person's own simulation of a derivation that has no simulation cell. */
  async openOwnSimulation(): Promise<Locator> {
    await this.page.getByRole("toolbar", { name: "Derivation actions" }).getByRole("button", { name: "Simulate" }).click();
    await expect(this.ownSimulation).toBeVisible();
    return this.ownSimulation;
  }
}
