/**
 * Seeded sampling of tolerance studies. The stream is pure-rand's
 * xoroshiro128+ generator (Blackman and Vigna's xoroshiro128+, as fast-check
 * uses it), with 53-bit uniform doubles; the same seed gives the same samples
 * on every machine and in every release that keeps this file's order of draws.
 */
import { uniformFloat64 } from "pure-rand/distribution/uniformFloat64";
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import type { RandomGenerator } from "pure-rand/types/RandomGenerator";
import { MIN_NORMAL_SPAN_SD } from "./parse";
import type { RunPlan, StudySpec, VariedParameter } from "./types";

/** A seeded source of uniform doubles in [0, 1). */
export interface UniformSource {
  next(): number;
}

/** @example const random = seededUniform(1); random.next() // the same first value for seed 1, always */
export function seededUniform(seed: number): UniformSource {
  // The seed is a 32-bit pattern: 0 … 2³²−1 maps one-to-one onto the generator's int32 seed.
  const rng: RandomGenerator = xoroshiro128plus(seed | 0);
  return { next: () => uniformFloat64(rng) };
}

/** Uniform on [min, max). */
export function sampleUniform(random: UniformSource, min: number, max: number): number {
  return min + (max - min) * random.next();
}

/**
 * A standard normal deviate by the Box–Muller transform (one of each pair;
 * the other is dropped so that every draw uses exactly two uniforms).
 */
export function standardNormal(random: UniformSource): number {
  // 1 − u lies in (0, 1], so the logarithm is finite.
  const u = 1 - random.next();
  const v = random.next();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

/**
 * Normal(mean, sd) truncated to [min, max], by rejection: exact, and quick
 * because parse.ts requires the mean inside the bounds and the bounds at least
 * MIN_NORMAL_SPAN_SD standard deviations apart (acceptance above 3.9 %).
 */
export function sampleTruncatedNormal(random: UniformSource, mean: number, sd: number, min: number, max: number): number {
  // P(0 < Z < 0.1) ≈ 0.0398: the chance of 100 000 straight rejections is below 1e-1700.
  for (let attempt = 0; attempt < 100_000; attempt++) {
    const x = mean + sd * standardNormal(random);
    if (x >= min && x <= max) return x;
  }
  throw new RangeError(`no normal sample within [${min}, ${max}] (bounds narrower than ${MIN_NORMAL_SPAN_SD} sd?)`);
}

function sampleParameter(random: UniformSource, parameter: VariedParameter): number {
  if ("grid" in parameter) throw new TypeError(`${parameter.name} is a grid parameter`);
  return parameter.distribution === "uniform"
    ? sampleUniform(random, parameter.min, parameter.max)
    : sampleTruncatedNormal(random, parameter.mean, parameter.sd, parameter.min, parameter.max);
}

/**
 * Every run of a study in order: sample by sample, and within a sample case by
 * case (so the first runs to finish already cover every case). A grid's
 * samples are the product of its values, the last parameter changing fastest;
 * a tolerance study draws its parameters in the listed order, sample by sample.
 *
 * @example expandRuns(spec).length === spec.runCount
 */
export function expandRuns(spec: Pick<StudySpec, "mode" | "samples" | "seed" | "parameters" | "cases">): RunPlan[] {
  const samples: Record<string, number>[] = [];
  if (spec.mode === "grid") {
    const grids = spec.parameters.map((p) => ("grid" in p ? p.grid : []));
    const total = grids.reduce((product, values) => product * values.length, 1);
    for (let s = 0; s < total; s++) {
      const values: Record<string, number> = {};
      let rest = s;
      for (let i = spec.parameters.length - 1; i >= 0; i--) {
        const grid = grids[i]!;
        values[spec.parameters[i]!.name] = grid[rest % grid.length]!;
        rest = Math.floor(rest / grid.length);
      }
      // Keep the listed order in the record.
      samples.push(Object.fromEntries(spec.parameters.map((p) => [p.name, values[p.name]!])));
    }
  } else {
    const random = seededUniform(spec.seed);
    for (let s = 0; s < spec.samples; s++) samples.push(Object.fromEntries(spec.parameters.map((p) => [p.name, sampleParameter(random, p)])));
  }
  const runs: RunPlan[] = [];
  samples.forEach((parameters, s) => {
    spec.cases.forEach((entry, c) => runs.push({ index: s * spec.cases.length + c, caseIndex: c, caseName: entry.name, parameters }));
  });
  return runs;
}
