import type { Model } from "../model";

export interface ChainOptions {
  /** Number of links (≥ 1). */
  links: number;
  /** Numeric parameter values to attach (defaults: 1 kg, 1 m, 9.81 m/s²). */
  masses?: number[];
  lengths?: number[];
  gravity?: number;
}

/**
 * The N-link planar chain of point masses on massless rigid links, hanging from
 * a fixed pivot, built from Cartesian definitions:
 * x_k = x_{k−1} + l_k·sin(θ_k), y_k = y_{k−1} − l_k·cos(θ_k), θ measured from
 * the downward vertical.
 *
 * @example chainModel({ links: 2 }) // the double pendulum
 */
export function chainModel({ links, masses, lengths, gravity = 9.81 }: ChainOptions): Model {
  if (!Number.isInteger(links) || links < 1) throw new RangeError("a chain needs at least one link");
  const ks = Array.from({ length: links }, (_, i) => i + 1);
  const definitions = ks.flatMap((k) => [
    { name: `x${k}`, expr: k === 1 ? `l1*sin(theta1)` : `x${k - 1} + l${k}*sin(theta${k})` },
    { name: `y${k}`, expr: k === 1 ? `-l1*cos(theta1)` : `y${k - 1} - l${k}*cos(theta${k})` },
  ]);
  return {
    title: links === 2 ? "Double pendulum" : `${links}-link pendulum chain`,
    coordinates: ks.map((k) => ({ name: `theta${k}`, unit: "rad" })),
    parameters: [
      ...ks.map((k) => ({ name: `m${k}`, unit: "kg", value: masses?.[k - 1] ?? 1 })),
      ...ks.map((k) => ({ name: `l${k}`, unit: "m", value: lengths?.[k - 1] ?? 1 })),
      { name: "g", unit: "m/s^2", value: gravity },
    ],
    definitions,
    kinetic: ks.map((k) => `1/2*m${k}*(x${k}'^2 + y${k}'^2)`).join(" + "),
    potential: ks.map((k) => `m${k}*g*y${k}`).join(" + "),
  };
}
