import { execFileSync } from "node:child_process";

function hasNumpy(python: string): boolean {
  try {
    execFileSync(python, ["-c", "import numpy"], { stdio: "ignore" });
    return true;
  } catch {
    return false;
  }
}

/**
 * A Python interpreter with NumPy for running exported code. Uses `python3` from
 * PATH if it has NumPy; otherwise installs Debian's python3-numpy (as root, with
 * apt-get) and uses the system interpreter. Throws if neither works, so a
 * missing NumPy fails the test instead of skipping it.
 */
export function pythonWithNumpy(): string {
  if (hasNumpy("python3")) return "python3";
  const system = "/usr/bin/python3";
  if (hasNumpy(system)) return system;
  execFileSync("apt-get", ["update"], { stdio: "ignore", timeout: 300_000 });
  execFileSync("apt-get", ["install", "-y", "--no-install-recommends", "python3-numpy"], { stdio: "ignore", timeout: 600_000, env: { ...process.env, DEBIAN_FRONTEND: "noninteractive" } });
  if (!hasNumpy(system)) throw new Error("python3-numpy was installed but numpy still does not import");
  return system;
}
