// Demo data: an invented firm, Kestrel Lift & Motion, that designs a gantry
// crane, a camera gimbal and a seat-suspension test rig. The parameter values are
// plausible round numbers chosen for the demo, not measured data.
import type { DerivationStatus, MemberRole } from "@/lib/domain";
import type { Model } from "@/lib/mechanics";
import { createCell, modelToDocument, type Cell, type DerivationDocument, type StoredDocument, type StudySettings } from "@/lib/notebook/document";

export const demoPassword = "kestrel-demo-2041";
export const demoTeam = { name: "Kestrel Lift & Motion", slug: "kestrel-lift-motion" };

/**
 * The demo team's read-only API token, fixed so the README can show the curl line
 * a firmware build uses. Only its hash is stored, as for any token. It is public:
 * never seed the demo team on a server that holds real work.
 */
export const demoApiToken = "hol_KestrelDemoReadOnlyToken_not-for-production";
export const demoApiTokenName = "Demo firmware build (read-only)";

export const demoUsers: { email: string; name: string; role: MemberRole }[] = [
  { email: "lead@demo.holonomy.test", name: "Ines Marlow", role: "lead" },
  { email: "analyst@demo.holonomy.test", name: "Tomas Reyes", role: "analyst" },
  { email: "reviewer@demo.holonomy.test", name: "Priya Nandakumar", role: "reviewer" },
  { email: "viewer@demo.holonomy.test", name: "Jonah Weller", role: "viewer" },
];

/**
 * A worked notebook for a demo model: a note first, the model's cells, then the
 * generated cells. Cell ids are derived from the title so re-seeding gives the
 * same document.
 */
function demoNotebook(
  model: Model,
  note: string,
  extra: { linearization?: boolean; code?: "python" | "c" | "julia" | "octave" | "typescript" } = {},
): DerivationDocument {
  let counter = 0;
  const prefix = model.title
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "")
    .slice(0, 12);
  const newId = () => `${prefix}${(counter += 1)}`;
  const doc = modelToDocument(model, newId);
  const cells: Cell[] = [{ ...createCell("note", newId()), markdown: note }, ...doc.cells];
  if (extra.linearization) cells.push(createCell("linearization", newId()));
  if (extra.code) cells.push({ ...createCell("code-export", newId()), settings: { language: extra.code } });
  return { ...doc, cells };
}

const craneTrolley: Model = {
  title: "Gantry crane: trolley with swinging load",
  coordinates: [
    { name: "x", unit: "m", description: "trolley position along the girder" },
    { name: "theta", unit: "rad", description: "rope angle from the vertical" },
  ],
  parameters: [
    { name: "M", unit: "kg", value: 850, description: "trolley with hoist" },
    { name: "m", unit: "kg", value: 2000, description: "rated load with hook block" },
    { name: "l", unit: "m", value: 6.5, description: "rope length, load at working height" },
    { name: "b", unit: "N*s/m", value: 120, description: "wheel and drive resistance" },
    { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
  ],
  inputs: [{ name: "F", unit: "N", description: "traverse drive force" }],
  definitions: [
    { name: "xl", expr: "x + l*sin(theta)", description: "load position, horizontal" },
    { name: "yl", expr: "-l*cos(theta)", description: "load position, vertical" },
  ],
  kinetic: "1/2*M*x'^2 + 1/2*m*(xl'^2 + yl'^2)",
  potential: "m*g*yl",
  dissipation: "1/2*b*x'^2",
  forces: { x: "F" },
};

const cameraGimbal: Model = {
  title: "Camera gimbal: two-axis pan and tilt",
  coordinates: [
    { name: "psi", unit: "rad", description: "pan angle of the outer yoke" },
    { name: "theta", unit: "rad", description: "tilt angle of the camera cradle" },
  ],
  parameters: [
    { name: "J_y", unit: "kg*m^2", value: 0.018, description: "yoke about the pan axis" },
    { name: "I_1", unit: "kg*m^2", value: 0.009, description: "cradle and camera about the tilt axis" },
    { name: "I_2", unit: "kg*m^2", value: 0.004, description: "cradle and camera about the lens axis" },
    { name: "I_3", unit: "kg*m^2", value: 0.007, description: "cradle and camera about the third principal axis" },
    { name: "m", unit: "kg", value: 1.6, description: "cradle and camera mass" },
    { name: "h_c", unit: "m", value: 0.003, description: "centre of mass below the tilt axis" },
    { name: "c_p", unit: "N*m*s/rad", value: 0.0015, description: "pan bearing and motor damping" },
    { name: "c_t", unit: "N*m*s/rad", value: 0.001, description: "tilt bearing and motor damping" },
    { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
  ],
  inputs: [
    { name: "tau_p", unit: "N*m", description: "pan motor torque" },
    { name: "tau_t", unit: "N*m", description: "tilt motor torque" },
  ],
  kinetic: "1/2*J_y*psi'^2 + 1/2*(I_2*sin(theta)^2 + I_3*cos(theta)^2)*psi'^2 + 1/2*I_1*theta'^2",
  potential: "m*g*h_c*(1 - cos(theta))",
  dissipation: "1/2*c_p*psi'^2 + 1/2*c_t*theta'^2",
  forces: { psi: "tau_p", theta: "tau_t" },
};

const seatSuspension: Model = {
  title: "Seat-suspension rig: single mass on spring and damper",
  coordinates: [{ name: "z", unit: "m", description: "seat height from the unloaded spring position" }],
  parameters: [
    { name: "m", unit: "kg", value: 95, description: "seat with test dummy" },
    { name: "k", unit: "N/m", value: 42000, description: "suspension spring rate" },
    { name: "c", unit: "N*s/m", value: 1300, description: "damper coefficient" },
    { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
  ],
  inputs: [{ name: "F_b", unit: "N", description: "force from the rig's actuator" }],
  kinetic: "1/2*m*z'^2",
  potential: "1/2*k*z^2 + m*g*z",
  dissipation: "1/2*c*z'^2",
  forces: { z: "F_b" },
};

/**
 * The crane's load written in Cartesian coordinates and held on the rope by a
 * constraint, so the rope tension is the constraint's multiplier: what the
 * hoist rope, the sheaves and the trolley are sized from during a swing.
 */
const craneRopeTension: Model = {
  title: "Gantry crane: hoist rope tension during a load swing",
  coordinates: [
    { name: "x", unit: "m", description: "trolley position along the girder" },
    { name: "xl", unit: "m", description: "load position, horizontal" },
    { name: "yl", unit: "m", description: "load position, vertical (up), from the trolley's rope point" },
  ],
  parameters: [
    { name: "M", unit: "kg", value: 850, description: "trolley with hoist" },
    { name: "m", unit: "kg", value: 2000, description: "rated load with hook block" },
    { name: "l", unit: "m", value: 6.5, description: "rope length, load at working height" },
    { name: "b", unit: "N*s/m", value: 120, description: "wheel and drive resistance" },
    { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
  ],
  inputs: [{ name: "F", unit: "N", description: "traverse drive force" }],
  kinetic: "1/2*M*x'^2 + 1/2*m*(xl'^2 + yl'^2)",
  potential: "m*g*yl",
  dissipation: "1/2*b*x'^2",
  forces: { x: "F" },
  constraints: [{ name: "rope", expr: "(xl - x)^2 + yl^2 - l^2", description: "the rope keeps the load at distance l from the trolley" }],
  outputs: [
    { name: "rope_tension", expr: "-2*l*lambda_rope", unit: "N", description: "pull in the hoist rope" },
    { name: "trolley_side_load", expr: "-2*lambda_rope*(xl - x)", unit: "N", description: "horizontal pull of the rope on the trolley" },
    { name: "rope_angle", expr: "atan((xl - x)/(-yl))", unit: "rad", description: "rope angle from the vertical (load below the trolley)" },
  ],
};

/** Title of the demo derivation that holds the crane's tolerance study (scripts/seed.ts seeds a completed study of it). */
export const craneStudyTitle = craneRopeTension.title;
/** Cell id of the crane's tolerance study. */
export const craneStudyCellId = "cranerope-study";

/**
 * A traverse force that accelerates trolley and load together at `accel` from
 * `start` for `span` seconds, and brakes them at the same rate from `brake`;
 * `ramp` (s) softens each change of force (tanh edges).
 */
function traverseProfile({ accel, start, span, brake, ramp }: { accel: number; start: number; span: number; brake: number; ramp: number }): string {
  const pulse = (from: number, to: number) => `(tanh((t - ${from})/${ramp}) - tanh((t - ${to})/${ramp}))/2`;
  return `(M + m)*${accel}*(${pulse(start, start + span)} - ${pulse(brake, brake + span)})`;
}

/**
 * The crane's tolerance study: rope length within ±5 % of 6.5 m, load from
 * 0.5 t to the rated 2 t (both uniform), under a gentle and a hard traverse
 * start and stop (our own numbers), watching the rope angle and tension the
 * spec sheet quotes. `samples` per case (the demo keeps it small; the study
 * benchmark runs 500 per case).
 */
export function craneStudySettings(samples = 40): StudySettings {
  const hanging = { x: "0", xl: "0", yl: "-6.5" };
  return {
    mode: "tolerance",
    samples: String(samples),
    seed: "2041",
    parameters: [
      { name: "l", values: "", distribution: "uniform", min: "6.175", max: "6.825", mean: "", sd: "" },
      { name: "m", values: "", distribution: "uniform", min: "500", max: "2000", mean: "", sd: "" },
    ],
    cases: [
      {
        name: "gentle start and stop",
        initialCoordinates: hanging,
        initialRates: {},
        inputs: { F: traverseProfile({ accel: 0.25, start: 0.5, span: 3, brake: 5.5, ramp: 0.6 }) },
      },
      {
        name: "hard start and stop",
        initialCoordinates: hanging,
        initialRates: {},
        inputs: { F: traverseProfile({ accel: 0.6, start: 0.5, span: 1.5, brake: 6, ramp: 0.1 }) },
      },
    ],
    startTime: "0",
    endTime: "10",
    outputStep: "0.01",
    tolerance: "1e-8",
    watch: ["rope_angle", "rope_tension"],
  };
}

/** The rope-tension notebook: the model, a simulation of a swing released at 0.15 rad with the drive idle, and its loads. */
function ropeTensionNotebook(): DerivationDocument {
  const doc = demoNotebook(
    craneRopeTension,
    [
      "Rope load during a free swing of the rated load. The load is a point mass at $(x_l, y_l)$, held on the rope by the constraint",
      "$$g_\\text{rope} = (x_l - x)^2 + y_l^2 - l^2 = 0,$$",
      "so the rope tension is $T = -2\\,l\\,\\lambda_\\text{rope}$ and its horizontal pull on the trolley $-2\\lambda_\\text{rope}(x_l - x)$.",
      "",
      "Released from rest at $\\theta_0$ with the trolley free, momentum and energy give the tension at the bottom of the first swing as",
      "$$T = m g\\left[1 + 2(1 - \\cos\\theta_0)\\left(1 + \\frac{m}{M}\\right)\\right] \\approx 21\\,100\\ \\text{N}$$",
      "for $\\theta_0 = 0.15$; the drive resistance $b$ takes a little off. That is what the rope and sheaves see, before any dynamic factor.",
      "The initial load position is typed to four figures; the run projects it onto the rope and says what it changed.",
    ].join("\n"),
  );
  const simulation = createCell("simulation", "cranerope-sim");
  simulation.settings = {
    ...simulation.settings,
    initialCoordinates: { x: "0", xl: "0.9713", yl: "-6.4269" },
    endTime: "20",
    outputStep: "0.01",
    inputs: { F: "0" },
    points: [
      { x: "x", y: "0" },
      { x: "xl", y: "yl" },
    ],
  };
  const studyNote = createCell("note", "cranerope-study-note");
  studyNote.markdown = [
    "**Tolerance study for the spec sheet.** The rope length varies within ±5 % of 6.5 m and the load from 0.5 t to the rated 2 t,",
    "under a gentle traverse (0.25 m/s² with soft edges) and a hard one (0.6 m/s², sharp edges). The worst rope angle and tension",
    "below feed the sheave and rope selection, before dynamic factors.",
    "",
    "> These figures come from a model. They do not replace the applicable crane codes and standards, nor the sign-off of a",
    "> qualified engineer: check them against tests before they size hardware or decide anything that bears on safety.",
  ].join("\n");
  const study = createCell("study", craneStudyCellId);
  study.title = "Tolerance study: rope length, load and traverse";
  study.settings = craneStudySettings();
  return { ...doc, cells: [...doc.cells, simulation, studyNote, study] };
}

/**
 * The demo derivations. Content is stored as any version of the document may
 * be, so the last one is a pre-notebook model file; scripts/seed.ts writes each
 * through the same validation (and migration) as the API. An "approved" one is
 * approved through the real flow: the analyst's changes, a review request, the
 * reviewer's sign-off and the lead's approval.
 */
export const demoDerivations: { title: string; status: DerivationStatus; owner: string; content: StoredDocument }[] = [
  {
    title: craneTrolley.title,
    status: "approved",
    owner: "analyst@demo.holonomy.test",
    content: demoNotebook(
      craneTrolley,
      [
        "Traverse dynamics of the 20 t gantry: the trolley runs on the girder and the load hangs on a rope of fixed length $l$.",
        "The load swings as a point mass at $(x_l, y_l)$; rope stretch and hoisting are in the separate hoist derivation.",
        "",
        "For small swings about the hanging position the pendulum frequency is $$f = \\frac{1}{2\\pi}\\sqrt{\\frac{g}{l}\\left(1 + \\frac{m}{M}\\right)}$$",
      ].join("\n"),
      { linearization: true, code: "c" },
    ),
  },
  {
    title: cameraGimbal.title,
    status: "in_review",
    owner: "analyst@demo.holonomy.test",
    content: demoNotebook(
      cameraGimbal,
      [
        "Pan and tilt of the inspection camera head. The cradle's inertia seen by the pan axis changes with tilt:",
        "$$J_\\psi(\\theta) = J_y + I_2\\sin^2\\theta + I_3\\cos^2\\theta$$",
        "The centre of mass sits $h_c$ below the tilt axis, so the cradle rights itself; pan is free apart from damping.",
      ].join("\n"),
      { linearization: true, code: "python" },
    ),
  },
  {
    title: seatSuspension.title,
    status: "draft",
    owner: "lead@demo.holonomy.test",
    content: demoNotebook(
      seatSuspension,
      [
        "Vertical motion of the seat on the suspension test rig, excited by the rig's actuator force $F_b$.",
        "Expected undamped natural frequency $f_n = \\frac{1}{2\\pi}\\sqrt{k/m} \\approx 3.3$ Hz for the values below.",
      ].join("\n"),
      { linearization: true },
    ),
  },
  {
    title: craneRopeTension.title,
    status: "draft",
    owner: "analyst@demo.holonomy.test",
    content: ropeTensionNotebook(),
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
