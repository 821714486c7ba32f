import { describe, expect, it } from "vitest";
import { DEFAULT_SIMULATION_SETTINGS, createCell } from "@/lib/notebook/document";
import { EMPTY_VIEW_PREFERENCES, personalCell, readViewPreferences, setViewChoice, viewPreferencesSchema } from "@/lib/notebook/view-preferences";

describe("view preferences", () => {
  const equations = { ...createCell("equations", "eq"), settings: { form: "residual" as const } };
  const linearization = { ...createCell("linearization", "lin"), settings: { equilibriumIndex: 0, inputValues: { F: "10" } } };
  const simulation = { ...createCell("simulation", "sim"), settings: { ...DEFAULT_SIMULATION_SETTINGS, endTime: "5", initialCoordinates: { theta: "0.1" } } };

  it("lays a person's choice over the author's setting and drops it again", () => {
    const mine = setViewChoice(EMPTY_VIEW_PREFERENCES, "eq", { form: "mass-matrix" });
    expect(personalCell(equations, mine).settings.form).toBe("mass-matrix");
    // The document's cell is left as it was.
    expect(equations.settings.form).toBe("residual");
    const back = setViewChoice(mine, "eq", { form: undefined });
    expect(back.cells).toEqual({});
    expect(personalCell(equations, back)).toBe(equations);
  });

  it("keeps the other settings of a cell and only the choice its kind takes", () => {
    const mine = setViewChoice(EMPTY_VIEW_PREFERENCES, "lin", { equilibriumIndex: 1, form: "accelerations" });
    expect(personalCell(linearization, mine).settings).toEqual({ equilibriumIndex: 1, inputValues: { F: "10" } });
  });

  it("lays simulation settings over the cell's only for a person who keeps their own", () => {
    const mine = setViewChoice(EMPTY_VIEW_PREFERENCES, "sim", { simulation: { initialCoordinates: { theta: "0.4" } } });
    expect(personalCell(simulation, mine).settings).toEqual(simulation.settings);
    expect(personalCell(simulation, mine, { ownSimulation: true }).settings).toEqual({
      ...DEFAULT_SIMULATION_SETTINGS,
      endTime: "5",
      initialCoordinates: { theta: "0.4" },
    });
  });

  it("reads what it cannot use as no choices at all", () => {
    expect(readViewPreferences(null)).toEqual(EMPTY_VIEW_PREFERENCES);
    expect(readViewPreferences({ schemaVersion: 1, cells: { eq: { form: "sideways" } } })).toEqual(EMPTY_VIEW_PREFERENCES);
    expect(readViewPreferences({ schemaVersion: 1, cells: { eq: { form: "accelerations" } } }).cells.eq?.form).toBe("accelerations");
  });

  it("refuses an equilibrium index out of range and preferences too large to keep", () => {
    expect(viewPreferencesSchema.safeParse({ schemaVersion: 1, cells: { lin: { equilibriumIndex: -1 } } }).success).toBe(false);
    expect(viewPreferencesSchema.safeParse({ schemaVersion: 1, cells: {}, ownSimulation: { inputs: { u: "x".repeat(70_000) } } }).success).toBe(false);
  });
});
