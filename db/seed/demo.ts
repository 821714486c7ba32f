// Demo data: an invented firm, Kestrel Lift & Motion, that designs a gantry
// crane, a camera gimbal and a seat-suspension test rig. The parameter values are
// plausible round numbers chosen for the demo, not measured data.
import type { DerivationStatus, MemberRole } from "@/lib/domain";

export const demoPassword = "kestrel-demo-2041";
export const demoTeam = { name: "Kestrel Lift & Motion", slug: "kestrel-lift-motion" };

export const demoUsers: { email: string; name: string; role: MemberRole }[] = [
  { email: "lead@demo.holonomy.test", name: "Ines Marlow", role: "lead" },
  { email: "analyst@demo.holonomy.test", name: "Tomas Reyes", role: "analyst" },
  { email: "reviewer@demo.holonomy.test", name: "Priya Nandakumar", role: "reviewer" },
  { email: "viewer@demo.holonomy.test", name: "Jonah Weller", role: "viewer" },
];

export const demoDerivations: { title: string; status: DerivationStatus; owner: string; content: Record<string, unknown> }[] = [
  {
    title: "Gantry crane: trolley with swinging load",
    status: "approved",
    owner: "analyst@demo.holonomy.test",
    content: {
      title: "Gantry crane: trolley with swinging load",
      coordinates: [
        { name: "x", unit: "m" },
        { name: "theta", unit: "rad" },
      ],
      parameters: [
        { name: "M", unit: "kg", value: 850 },
        { name: "m", unit: "kg", value: 2000 },
        { name: "l", unit: "m", value: 6.5 },
        { name: "b", unit: "N*s/m", value: 120 },
        { name: "g", unit: "m/s^2", value: 9.81 },
      ],
      inputs: [{ name: "F", unit: "N" }],
      definitions: [
        { name: "xl", expr: "x + l*sin(theta)" },
        { name: "yl", expr: "-l*cos(theta)" },
      ],
      kinetic: "1/2*M*x'^2 + 1/2*m*(xl'^2 + yl'^2)",
      potential: "m*g*yl",
      dissipation: "1/2*b*x'^2",
      forces: { x: "F" },
    },
  },
  {
    title: "Camera gimbal: pitch axis with offset payload",
    status: "in_review",
    owner: "analyst@demo.holonomy.test",
    content: {
      title: "Camera gimbal: pitch axis with offset payload",
      coordinates: [{ name: "phi", unit: "rad" }],
      parameters: [
        { name: "J", unit: "kg*m^2", value: 0.012 },
        { name: "m", unit: "kg", value: 1.4 },
        { name: "e", unit: "m", value: 0.004 },
        { name: "k_t", unit: "N*m/rad", value: 0.05 },
        { name: "c", unit: "N*m*s/rad", value: 0.002 },
        { name: "g", unit: "m/s^2", value: 9.81 },
      ],
      inputs: [{ name: "tau", unit: "N*m" }],
      kinetic: "1/2*J*phi'^2",
      potential: "1/2*k_t*phi^2 + m*g*e*(1 - cos(phi))",
      dissipation: "1/2*c*phi'^2",
      forces: { phi: "tau" },
    },
  },
  {
    title: "Seat-suspension rig: single mass on spring and damper",
    status: "draft",
    owner: "lead@demo.holonomy.test",
    content: {
      title: "Seat-suspension rig: single mass on spring and damper",
      coordinates: [{ name: "z", unit: "m" }],
      parameters: [
        { name: "m", unit: "kg", value: 95 },
        { name: "k", unit: "N/m", value: 42000 },
        { name: "c", unit: "N*s/m", value: 1300 },
        { name: "g", unit: "m/s^2", value: 9.81 },
      ],
      inputs: [{ name: "F_b", unit: "N" }],
      kinetic: "1/2*m*z'^2",
      potential: "1/2*k*z^2 + m*g*z",
      dissipation: "1/2*c*z'^2",
      forces: { z: "F_b" },
    },
  },
  {
    title: "Gantry crane: hoist drum and rope stretch",
    status: "draft",
    owner: "analyst@demo.holonomy.test",
    content: {
      title: "Gantry crane: hoist drum and rope stretch",
      coordinates: [
        { name: "alpha", unit: "rad" },
        { name: "s", unit: "m" },
      ],
      parameters: [
        { name: "J_d", unit: "kg*m^2", value: 14 },
        { name: "r", unit: "m", value: 0.3 },
        { name: "m", unit: "kg", value: 2000 },
        { name: "k_r", unit: "N/m", value: 3.5e6 },
        { name: "g", unit: "m/s^2", value: 9.81 },
      ],
      inputs: [{ name: "tau_m", unit: "N*m" }],
      kinetic: "1/2*J_d*alpha'^2 + 1/2*m*s'^2",
      potential: "1/2*k_r*(s - r*alpha)^2 - m*g*s",
      forces: { alpha: "tau_m" },
    },
  },
];
