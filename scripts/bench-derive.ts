// Derivation benchmark: the N-link planar chain built from Cartesian definitions,
// N = 2…8, 12, 16, 20, 25, 30 (the coordinate limit). Prints in-process time and
// term counts per equation (their range beyond 8 links). A benchmark, not a timed
// test: targets are 5 links under 100 ms, 8 links under 1 s, 30 links under 10 s.
import { deriveModel, chainModel, topLevelTerms } from "../lib/mechanics";

const REPEATS = 5;

// One warm-up pass so the first row does not pay for JIT compilation.
deriveModel(chainModel({ links: 3 }));

// CPU time beside wall time: on a shared machine the wall time also counts waiting for a core.
console.log("links  first ms  best ms  best cpu ms  terms per equation");
const LINKS = [2, 3, 4, 5, 6, 7, 8, 12, 16, 20, 25, 30];
for (const links of LINKS) {
  const model = chainModel({ links });
  const times: number[] = [];
  const cpu: number[] = [];
  let terms: number[] = [];
  for (let r = 0; r < (links > 12 ? 2 : REPEATS); r++) {
    const start = performance.now();
    const startCpu = process.cpuUsage();
    const result = deriveModel(model);
    times.push(performance.now() - start);
    const used = process.cpuUsage(startCpu);
    cpu.push((used.user + used.system) / 1000);
    terms = result.equations.map((e) => topLevelTerms(e.residual).length);
  }
  console.log(
    `${String(links).padStart(5)}  ${times[0]!.toFixed(1).padStart(8)}  ${Math.min(...times)
      .toFixed(1)
      .padStart(7)}  ${Math.min(...cpu)
      .toFixed(1)
      .padStart(11)}  ${links <= 8 ? terms.join(", ") : `${Math.min(...terms)}…${Math.max(...terms)}`}`,
  );
}
