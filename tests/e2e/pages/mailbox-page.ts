import { expect, type Page } from "@playwright/test";

/** The development mailbox that shows what the local mail fake captured. */
export class MailboxPage {
  constructor(private readonly page: Page) {}

  /** Opens the newest message to `address` whose subject matches, waiting for it to arrive. */
  async openMessageTo(address: string, subject: RegExp): Promise<void> {
    const item = this.page.getByTestId("mailbox-list").getByRole("link").filter({ hasText: address }).filter({ hasText: subject }).first();
    await expect(async () => {
      await this.page.goto("/dev/mailbox");
      await expect(item).toBeVisible({ timeout: 1000 });
    }).toPass({ timeout: 15_000 });
    await item.click();
    await expect(this.page.getByTestId("mailbox-message")).toBeVisible();
  }

  async linkHref(pattern: RegExp): Promise<string> {
    const href = await this.page.getByTestId("mailbox-message").getByRole("link", { name: pattern }).getAttribute("href");
    if (!href) throw new Error(`no link matching ${pattern} in the message`);
    return href;
  }
}
