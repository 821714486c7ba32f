// Derivation benchmark: the N-link planar chain built from Cartesian definitions,
// N = 2…8. Prints in-process time and term counts per equation. A benchmark,
// not a timed test: targets are 5 links under 100 ms and 8 links under 1 s.
import { deriveModel, chainModel, topLevelTerms } from "../lib/mechanics";

const REPEATS = 5;

// One warm-up pass so the first row does not pay for JIT compilation.
deriveModel(chainModel({ links: 3 }));

console.log("links  first ms  best ms  terms per equation");
for (let links = 2; links <= 8; links++) {
  const model = chainModel({ links });
  const times: number[] = [];
  let terms: number[] = [];
  for (let r = 0; r < REPEATS; r++) {
    const start = performance.now();
    const result = deriveModel(model);
    times.push(performance.now() - start);
    terms = result.equations.map((e) => topLevelTerms(e.residual).length);
  }
  console.log(
    `${String(links).padStart(5)}  ${times[0]!.toFixed(1).padStart(8)}  ${Math.min(...times)
      .toFixed(1)
      .padStart(7)}  ${terms.join(", ")}`,
  );
}
