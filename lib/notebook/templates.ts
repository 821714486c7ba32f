/**
 * Starting points for a new derivation, as model files. The scenarios are our
 * own demo firm's (cranes, hoists, test rigs).
 *
 * The N-link chain reuses the engine's chain builder (the one its benchmark
 * derives) and adds the picker's size limits, a title and descriptions.
 */
import { type Model, chainModel } from "../mechanics/browser";
import { createCell, createId, modelToDocument, type DerivationDocument } from "./document";

export const TEMPLATE_IDS = ["single-pendulum", "cart-with-pendulum", "two-mass-spring-chain", "n-link-chain"] as const;
export type TemplateId = (typeof TEMPLATE_IDS)[number];

export const MIN_CHAIN_LINKS = 1;
export const MAX_CHAIN_LINKS = 8;

export interface TemplateOptions {
  /** Number of links for the N-link chain (1…8). */
  links?: number;
}

export interface DerivationTemplate {
  id: TemplateId;
  title: string;
  /** One or two sentences shown in the template picker and as the first note. */
  description: string;
  /** Present when the user picks a size before creating. */
  size?: { label: string; min: number; max: number; default: number };
  build(options?: TemplateOptions): Model;
}

function singlePendulum(): Model {
  return {
    title: "Hook block on a fixed hoist cable",
    coordinates: [{ name: "theta", unit: "rad", description: "cable angle from the vertical" }],
    parameters: [
      { name: "m", unit: "kg", value: 40, description: "hook block mass" },
      { name: "l", unit: "m", value: 3.5, description: "cable length" },
      { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
    ],
    kinetic: "1/2*m*l^2*theta'^2",
    potential: "-m*g*l*cos(theta)",
  };
}

function cartWithPendulum(): Model {
  return {
    title: "Crane trolley with a hanging load",
    coordinates: [
      { name: "x", unit: "m", description: "trolley position along the girder" },
      { name: "theta", unit: "rad", description: "rope angle from the vertical" },
    ],
    parameters: [
      { name: "M", unit: "kg", value: 250, description: "trolley mass" },
      { name: "m", unit: "kg", value: 800, description: "load mass" },
      { name: "l", unit: "m", value: 6, description: "rope length" },
      { name: "b", unit: "N*s/m", value: 120, description: "trolley rolling resistance" },
      { name: "g", unit: "m/s^2", value: 9.81, description: "gravitational acceleration" },
    ],
    inputs: [{ name: "F", unit: "N", description: "drive force on the trolley" }],
    definitions: [
      { name: "xL", expr: "x + l*sin(theta)", description: "load position, horizontal" },
      { name: "yL", expr: "-l*cos(theta)", description: "load position, vertical" },
    ],
    kinetic: "1/2*M*x'^2 + 1/2*m*(xL'^2 + yL'^2)",
    potential: "m*g*yL",
    dissipation: "1/2*b*x'^2",
    forces: { x: "F" },
  };
}

function twoMassSpringChain(): Model {
  return {
    title: "Two sleds between three springs",
    coordinates: [
      { name: "x1", unit: "m", description: "first sled displacement" },
      { name: "x2", unit: "m", description: "second sled displacement" },
    ],
    parameters: [
      { name: "m1", unit: "kg", value: 12, description: "first sled mass" },
      { name: "m2", unit: "kg", value: 8, description: "second sled mass" },
      { name: "k1", unit: "N/m", value: 4000, description: "wall to first sled" },
      { name: "k2", unit: "N/m", value: 2500, description: "between the sleds" },
      { name: "k3", unit: "N/m", value: 4000, description: "second sled to wall" },
    ],
    kinetic: "1/2*m1*x1'^2 + 1/2*m2*x2'^2",
    potential: "1/2*k1*x1^2 + 1/2*k2*(x2 - x1)^2 + 1/2*k3*x2^2",
  };
}

/**
 * The planar chain of `links` point masses on rigid massless links, hanging
 * from a fixed pivot, built from Cartesian definitions.
 */
export function nLinkChain(links: number): Model {
  if (!Number.isInteger(links) || links < MIN_CHAIN_LINKS || links > MAX_CHAIN_LINKS) {
    throw new RangeError(`a chain has ${MIN_CHAIN_LINKS} to ${MAX_CHAIN_LINKS} links, not ${links}`);
  }
  const base = chainModel({ links, masses: Array(links).fill(1), lengths: Array(links).fill(0.5) });
  const descriptions = new Map<string, string>([["g", "gravitational acceleration"]]);
  for (let k = 1; k <= links; k++) {
    descriptions.set(`theta${k}`, `link ${k} angle from the vertical`);
    descriptions.set(`m${k}`, `mass at the end of link ${k}`);
    descriptions.set(`l${k}`, `length of link ${k}`);
  }
  const withDescription = <T extends { name: string }>(entry: T) => {
    const description = descriptions.get(entry.name);
    return description ? { ...entry, description } : entry;
  };
  return {
    ...base,
    title: `${links}-link chain`,
    coordinates: base.coordinates.map(withDescription),
    parameters: base.parameters.map(withDescription),
  };
}

export const TEMPLATES: readonly DerivationTemplate[] = [
  {
    id: "single-pendulum",
    title: "Single pendulum",
    description: "A hook block swinging on a hoist cable of fixed length.",
    build: singlePendulum,
  },
  {
    id: "cart-with-pendulum",
    title: "Cart with pendulum",
    description: "A crane trolley driven along its girder with a load hanging from a rope; rolling resistance as dissipation.",
    build: cartWithPendulum,
  },
  {
    id: "two-mass-spring-chain",
    title: "Two-mass spring chain",
    description: "Two test-rig sleds on a rail, coupled to each other and to the end walls by springs.",
    build: twoMassSpringChain,
  },
  {
    id: "n-link-chain",
    title: "N-link chain",
    description: "A hanging chain of point masses on rigid links, written through Cartesian definitions.",
    size: { label: "Links", min: MIN_CHAIN_LINKS, max: MAX_CHAIN_LINKS, default: 3 },
    build: (options) => nLinkChain(options?.links ?? 3),
  },
];

export function findTemplate(id: string): DerivationTemplate | undefined {
  return TEMPLATES.find((template) => template.id === id);
}

/** The model of a template; throws RangeError for an unknown id or chain size. */
export function templateModel(id: TemplateId, options?: TemplateOptions): Model {
  const template = findTemplate(id);
  if (!template) throw new RangeError(`no template "${id}"`);
  return template.build(options);
}

/** A new document from a template, opening with a note that says what it models. */
export function templateDocument(id: TemplateId, options?: TemplateOptions, newId: () => string = createId): DerivationDocument {
  const template = findTemplate(id);
  if (!template) throw new RangeError(`no template "${id}"`);
  const doc = modelToDocument(template.build(options), newId);
  const note = { ...createCell("note", newId()), markdown: template.description };
  return { ...doc, cells: [note, ...doc.cells] };
}
