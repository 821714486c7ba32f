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
 * The Python interpreter with NumPy for running exported code: HOLONOMY_PYTHON,
 * or `python3` from PATH. scripts/test.sh provisions NumPy and sets the variable;
 * tests never install anything. Throws when NumPy is missing, so the test fails
 * with the fix in its message instead of skipping.
 */
export function pythonWithNumpy(): string {
  const python = process.env.HOLONOMY_PYTHON || "python3";
  if (!hasNumpy(python)) {
    throw new Error(
      `"${python}" cannot import numpy. Run the suite through \`npm test\` (scripts/test.sh installs Debian's python3-numpy), ` +
        "or install NumPy and set HOLONOMY_PYTHON to that interpreter.",
    );
  }
  return python;
}
