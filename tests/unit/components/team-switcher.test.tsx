// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { cleanup, render, screen } from "@testing-library/react";
import { CurrentTeam, CurrentTeamProvider } from "@/components/current-team";
import { TeamSwitcher } from "@/components/team-switcher";

const navigation = vi.hoisted(() => ({ params: {} as { teamId?: string } }));
vi.mock("next/navigation", () => ({ useRouter: () => ({ push: vi.fn() }), useParams: () => navigation.params }));
afterEach(cleanup);

const teams = [
  { id: "t-cranes", name: "Kestrel cranes", role: "analyst" as const },
  { id: "t-gimbals", name: "Kestrel gimbals", role: "viewer" as const },
];

describe("TeamSwitcher", () => {
  it("shows the team named in the URL", () => {
    navigation.params = { teamId: "t-gimbals" };
    render(<TeamSwitcher teams={teams} />);
    expect((screen.getByRole("combobox", { name: "Switch team" }) as HTMLSelectElement).value).toBe("t-gimbals");
  });

  it("shows a derivation's team, which the page declares, where the URL names none", () => {
    navigation.params = {};
    const { unmount } = render(
      <CurrentTeamProvider>
        <TeamSwitcher teams={teams} />
        <CurrentTeam teamId="t-cranes" />
      </CurrentTeamProvider>,
    );
    expect((screen.getByRole("combobox", { name: "Switch team" }) as HTMLSelectElement).value).toBe("t-cranes");
    unmount();
    render(
      <CurrentTeamProvider>
        <TeamSwitcher teams={teams} />
      </CurrentTeamProvider>,
    );
    expect((screen.getByRole("combobox", { name: "Switch team" }) as HTMLSelectElement).value).toBe("");
  });
});
