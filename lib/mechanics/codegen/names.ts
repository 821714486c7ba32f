import type { SlotReference } from "./prepare";

/**
 * The generated code's argument names, in the product's own words: a reader
 * of `forcing(coordinates, rates, t, parameters, inputs)` needs no legend.
 */
export const ARGUMENT_NAMES: Record<Exclude<SlotReference, { array: "t" }>["array"], string> = {
  q: "coordinates",
  qd: "rates",
  qdd: "accelerations",
  p: "parameters",
  u: "inputs",
};

/** The argument holding a variable slot; the time is the scalar `t`. */
export function argumentOf(slot: SlotReference): string {
  return slot.array === "t" ? "t" : ARGUMENT_NAMES[slot.array];
}
