import { expect, type Locator, type Page } from "@playwright/test";

/** The header's notifications button and list. */
export class NotificationsMenu {
  constructor(private readonly page: Page) {}

  get button(): Locator {
    return this.page.getByTestId("notifications-button");
  }

  get panel(): Locator {
    return this.page.getByRole("region", { name: "Notifications" });
  }

  async unreadCount(): Promise<number> {
    const badge = this.page.getByTestId("unread-count");
    if (!(await badge.isVisible())) return 0;
    return Number((await badge.textContent()) ?? "0");
  }

  async open(): Promise<void> {
    if (!(await this.panel.isVisible())) await this.button.click();
    await expect(this.panel).toBeVisible();
  }

  /** The newest notification whose text contains `text`. */
  entry(text: string | RegExp): Locator {
    return this.panel.getByTestId("notification").filter({ hasText: text }).first();
  }

  /** Opens the notification (marking it read) and waits for its derivation. */
  async follow(text: string | RegExp): Promise<void> {
    await this.open();
    await this.entry(text).click();
    await expect(this.page).toHaveURL(/\/derivations\/[0-9a-f-]{36}$/);
  }
}
