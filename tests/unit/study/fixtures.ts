import type { Model } from "@/lib/mechanics/browser";
import { DEFAULT_STUDY_SETTINGS, type StudySettings } from "@/lib/notebook/document";

/** A point mass on a rope of length l from a fixed pivot, in Cartesian coordinates (y up), the rope a constraint. */
export const ropePendulum: Model = {
  title: "Rope pendulum",
  coordinates: [
    { name: "x", unit: "m" },
    { name: "y", unit: "m" },
  ],
  parameters: [
    { name: "m", unit: "kg", value: 10 },
    { name: "l", unit: "m", value: 2 },
    { name: "g", unit: "m/s^2", value: 9.81 },
  ],
  inputs: [{ name: "F", unit: "N" }],
  kinetic: "1/2*m*(x'^2 + y'^2)",
  potential: "m*g*y",
  forces: { x: "F" },
  constraints: [{ name: "rope", expr: "x^2 + y^2 - l^2" }],
  outputs: [{ name: "tension", expr: "-2*l*lambda_rope", unit: "N" }],
};

export function settings(patch: Partial<StudySettings>): StudySettings {
  return { ...structuredClone(DEFAULT_STUDY_SETTINGS), ...patch };
}

export const parameter = (patch: Partial<StudySettings["parameters"][number]>): StudySettings["parameters"][number] => ({
  name: "",
  values: "",
  distribution: "uniform",
  min: "",
  max: "",
  mean: "",
  sd: "",
  ...patch,
});
