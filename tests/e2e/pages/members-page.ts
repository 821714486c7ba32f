import { expect, type Locator, type Page } from "@playwright/test";

/** A team's members and invitations page (leads invite, resend and withdraw). */
export class MembersPage {
  constructor(private readonly page: Page) {}

  async open(teamName: string): Promise<void> {
    await this.page.goto("/teams");
    await this.page.getByRole("link", { name: new RegExp(teamName) }).click();
    await this.page.getByRole("link", { name: "Members and invitations" }).click();
    await expect(this.page.getByRole("heading", { name: "Members and invitations" })).toBeVisible();
  }

  get openInvites(): Locator {
    return this.page.getByTestId("open-invite");
  }

  async invite(email: string, role: "lead" | "analyst" | "reviewer" | "viewer"): Promise<void> {
    const form = this.page.getByRole("form", { name: "Invite by e-mail" });
    await form.getByLabel("E-mail").fill(email);
    await form.getByLabel("Role").selectOption(role);
    await form.getByRole("button", { name: "Send invitation" }).click();
    await expect(form.getByText(`Invitation sent to ${email}.`)).toBeVisible();
  }

  async withdraw(email: string): Promise<void> {
    this.page.once("dialog", (dialog) => void dialog.accept());
    await this.page.getByRole("button", { name: `Withdraw the invitation to ${email}` }).click();
    await expect(this.page.getByText(`Invitation to ${email} withdrawn`)).toBeVisible();
  }
}
