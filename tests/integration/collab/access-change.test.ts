// A change of someone's team membership reaches their open co-editing
// connections on every collaboration server at once: an editor demoted to a
// role that only reads is closed (the page then reloads read-only), a removed
// member is closed as having no access, and nobody else is disturbed.
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { closeDatabase } from "@/db/client";
import { createDerivation } from "@/db/queries/derivations";
import { deleteMembershipByTeamIdAndUserId, updateMemberRoleByTeamIdAndUserId, upsertMembership } from "@/db/queries/teams";
import { blankDocument } from "@/lib/notebook/document";
import { ROLE_NO_LONGER_EDITS } from "@/server/collab/server";
import { makeTeam, makeUser, resetDatabase, type TeamFixture } from "../support/fixtures";
import { connectClient, startCollabServer, tokenFor, waitFor, type RunningServer, type TestClient } from "./support";

let team: TeamFixture;
let east: RunningServer;
let west: RunningServer;
const clients: TestClient[] = [];

async function connect(server: RunningServer, userId: string, derivationId: string): Promise<TestClient> {
  const client = connectClient(server.url, derivationId, await tokenFor(userId, derivationId));
  clients.push(client);
  await waitFor(() => client.provider.synced, "first sync");
  return client;
}

async function newDerivation(title: string) {
  return createDerivation({ teamId: team.team.id, title, ownerId: team.members.lead.id, content: blankDocument(title) });
}

beforeAll(async () => {
  await resetDatabase();
  team = await makeTeam("Kestrel rig cell");
  east = await startCollabServer();
  west = await startCollabServer();
});

beforeEach(() => {
  for (const client of clients.splice(0)) client.destroy();
});

afterAll(async () => {
  for (const client of clients.splice(0)) client.destroy();
  await east.server.close();
  await west.server.close();
  await closeDatabase();
});

describe("a membership change and open connections", () => {
  it("closes an editor demoted to viewer on whichever server holds the connection, and leaves the others", async () => {
    const analyst = await makeUser("analyst");
    await upsertMembership({ teamId: team.team.id, userId: analyst.id, role: "analyst" });
    const derivation = await newDerivation("Hoist drum: rope stretch");
    const onEast = await connect(east, analyst.id, derivation.id);
    const onWest = await connect(west, analyst.id, derivation.id);
    const lead = await connect(east, team.members.lead.id, derivation.id);
    const viewer = await connect(west, team.members.viewer.id, derivation.id);

    await updateMemberRoleByTeamIdAndUserId({ teamId: team.team.id, userId: analyst.id, role: "viewer", actorId: team.members.lead.id });

    await waitFor(() => onEast.closed !== null && onWest.closed !== null, "both of the analyst's connections closed");
    expect(onEast.closed).toEqual({ code: 4403, reason: ROLE_NO_LONGER_EDITS });
    expect(onWest.closed).toEqual({ code: 4403, reason: ROLE_NO_LONGER_EDITS });
    // Nobody else was disturbed (a short wait: the notification has reached both servers by now).
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect(lead.closed).toBeNull();
    expect(viewer.closed).toBeNull();
  });

  it("closes a removed member as having no access", async () => {
    const analyst = await makeUser("analyst");
    await upsertMembership({ teamId: team.team.id, userId: analyst.id, role: "analyst" });
    const derivation = await newDerivation("Gimbal tilt axis");
    const client = await connect(west, analyst.id, derivation.id);

    await deleteMembershipByTeamIdAndUserId({ teamId: team.team.id, userId: analyst.id, actorId: team.members.lead.id });

    await waitFor(() => client.closed !== null, "the removed member's connection closed");
    expect(client.closed).toEqual({ code: 4403, reason: "You do not have access to this derivation." });
  });

  it("keeps a connection whose rights did not shrink: a reviewer made viewer still reads, an analyst made lead still edits", async () => {
    const reviewer = await makeUser("reviewer");
    const analyst = await makeUser("analyst");
    await upsertMembership({ teamId: team.team.id, userId: reviewer.id, role: "reviewer" });
    await upsertMembership({ teamId: team.team.id, userId: analyst.id, role: "analyst" });
    const derivation = await newDerivation("Trolley drive");
    const reading = await connect(east, reviewer.id, derivation.id);
    const editing = await connect(east, analyst.id, derivation.id);

    await updateMemberRoleByTeamIdAndUserId({ teamId: team.team.id, userId: reviewer.id, role: "viewer", actorId: team.members.lead.id });
    await updateMemberRoleByTeamIdAndUserId({ teamId: team.team.id, userId: analyst.id, role: "lead", actorId: team.members.lead.id });
    // A later change that does close, as a marker that both earlier notifications were handled.
    const marker = await makeUser("analyst");
    await upsertMembership({ teamId: team.team.id, userId: marker.id, role: "analyst" });
    const markerClient = await connect(east, marker.id, derivation.id);
    await deleteMembershipByTeamIdAndUserId({ teamId: team.team.id, userId: marker.id, actorId: team.members.lead.id });
    await waitFor(() => markerClient.closed !== null, "the marker's connection closed");

    expect(reading.closed).toBeNull();
    expect(editing.closed).toBeNull();
  });
});
