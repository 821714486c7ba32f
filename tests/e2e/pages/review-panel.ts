import { expect, type Locator, type Page } from "@playwright/test";

/** The notebook's review and approval panel, with the lock banner above it. */
export class ReviewPanel {
  constructor(private readonly page: Page) {}

  get root(): Locator {
    return this.page.getByTestId("review-panel");
  }

  get summary(): Locator {
    return this.page.getByTestId("review-summary");
  }

  get lockBanner(): Locator {
    return this.page.getByTestId("lock-banner");
  }

  async expectStatus(status: "draft" | "in_review" | "approved"): Promise<void> {
    await expect(this.root).toHaveAttribute("data-status", status, { timeout: 20_000 });
  }

  /** The revision number the panel's summary names ("In review — revision 3, …"). */
  async reviewedRevision(): Promise<number> {
    const text = (await this.summary.textContent()) ?? "";
    const match = /revision (\d+)/.exec(text);
    if (!match) throw new Error(`no revision in "${text}"`);
    return Number(match[1]);
  }

  async requestReview(reviewers: string[], message = ""): Promise<void> {
    await this.root.getByRole("button", { name: /Request review…|New review request…/ }).click();
    const dialog = this.page.getByRole("dialog", { name: "Request review" });
    for (const name of reviewers) await dialog.getByRole("checkbox", { name: new RegExp(name) }).check();
    if (message) await dialog.getByLabel("Message (optional)").fill(message);
    await dialog.getByRole("button", { name: "Send request" }).click();
    await expect(dialog).toBeHidden({ timeout: 20_000 });
    await this.expectStatus("in_review");
  }

  async requestChanges(comment: string): Promise<void> {
    await this.root.getByRole("button", { name: "Request changes" }).click();
    const dialog = this.page.getByRole("dialog", { name: "Request changes" });
    await dialog.getByLabel("What needs to change").fill(comment);
    await dialog.getByRole("button", { name: "Request changes" }).click();
    await expect(dialog).toBeHidden({ timeout: 20_000 });
    await this.expectStatus("draft");
  }

  async signOff(comment = ""): Promise<void> {
    await this.root.getByRole("button", { name: "Sign off" }).click();
    const dialog = this.page.getByRole("dialog", { name: "Sign off" });
    if (comment) await dialog.getByLabel("Comment (optional)").fill(comment);
    await dialog.getByRole("button", { name: "Sign off" }).click();
    await expect(dialog).toBeHidden({ timeout: 20_000 });
  }

  async approve(revision: number): Promise<void> {
    await this.root.getByRole("button", { name: `Approve revision ${revision}` }).click();
    const dialog = this.page.getByRole("dialog", { name: "Approve and lock" });
    await dialog.getByRole("button", { name: `Approve and lock revision ${revision}` }).click();
    await expect(dialog).toBeHidden({ timeout: 20_000 });
    await expect(this.lockBanner).toBeVisible({ timeout: 20_000 });
  }

  /** Opens the unlock dialog and submits `reason`; returns the dialog for checks. */
  async submitUnlock(reason: string): Promise<Locator> {
    const dialog = this.page.getByRole("dialog", { name: "Unlock for changes" });
    if (!(await dialog.isVisible())) await this.lockBanner.getByRole("button", { name: "Unlock…" }).click();
    await dialog.getByLabel("Reason for unlocking").fill(reason);
    await dialog.getByRole("button", { name: "Unlock" }).click();
    return dialog;
  }
}
