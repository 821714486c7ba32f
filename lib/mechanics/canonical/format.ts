import { formatNumber } from "../expr/parse";
import * as C from "./coefficient";
import type { SymbolSpace } from "./space";
import type { Poly, Term, Trig } from "./term";

/**
 * Writes canonical sums in Holonomy's input syntax, compact like the textbook
 * forms: `m2*l1*l2*theta2'^2*sin(theta1 - theta2)`, `k/r^2`, `m*x'^2/2`.
 * The text parses back (parseExpression) to the same canonical sum.
 */
export function formatPoly(space: SymbolSpace, p: Poly): string {
  const terms = formatTerms(space, p);
  if (terms.length === 0) return "0";
  let text = terms[0]!;
  for (let i = 1; i < terms.length; i++) {
    const t = terms[i]!;
    text += t.startsWith("-") ? ` - ${t.slice(1)}` : ` + ${t}`;
  }
  return text;
}

/** The signed text of each term, in output order: acceleration terms first (by coordinate), then rate terms, then the rest. */
export function formatTerms(space: SymbolSpace, p: Poly): string[] {
  const rows = [...p.values()].map((t) => ({ text: formatTerm(space, t), order: termOrder(space, t) }));
  rows.sort((a, b) => a.order - b.order || (a.text.replace(/^-/, "") < b.text.replace(/^-/, "") ? -1 : a.text.replace(/^-/, "") > b.text.replace(/^-/, "") ? 1 : 0));
  return rows.map((r) => r.text);
}

/** The canonical terms of a sum in the same order as formatTerms. */
export function orderedTerms(space: SymbolSpace, p: Poly): Term[] {
  const rows = [...p.values()].map((t) => ({ term: t, text: formatTerm(space, t).replace(/^-/, ""), order: termOrder(space, t) }));
  rows.sort((a, b) => a.order - b.order || (a.text < b.text ? -1 : a.text > b.text ? 1 : 0));
  return rows.map((r) => r.term);
}

/** Accelerations (by coordinate), then rates, then coordinates, then time, then constants and inputs. */
function termOrder(space: SymbolSpace, t: Term): number {
  let accel = Infinity;
  let rate = false;
  let coordinate = false;
  let time = false;
  const note = (id: number) => {
    for (const d of space.entry(id).dependsOn) {
      const entry = space.entry(d);
      if (entry.kind === "acceleration") accel = Math.min(accel, entry.coordinate);
      else if (entry.kind === "rate") rate = true;
      else if (entry.kind === "coordinate") coordinate = true;
      else if (entry.kind === "time") time = true;
    }
  };
  for (let i = 0; i < t.f.length; i += 2) note(t.f[i]!);
  if (t.g) for (let i = 0; i < t.g.combo.length; i += 2) note(t.g.combo[i]!);
  if (accel !== Infinity) return accel;
  return rate ? 1000 : coordinate ? 2000 : time ? 3000 : 4000;
}

export function formatTerm(space: SymbolSpace, t: Term): string {
  const value = C.toNumber(t.c);
  const negative = value < 0;
  const numerator: string[] = [];
  const denominator: string[] = [];
  const factors: [number, number][] = [];
  for (let i = 0; i < t.f.length; i += 2) factors.push([t.f[i]!, t.f[i + 1]!]);
  factors.sort((a, b) => space.printRank(a[0]) - space.printRank(b[0]));
  for (const [id, e] of factors) {
    if (e > 0) numerator.push(formatFactor(space, id, e));
    else denominator.push(formatFactor(space, id, -e));
  }
  if (t.g !== null) numerator.push(formatTrig(space, t.g));
  let bottom: string | null = null;
  if (C.isExact(t.c)) {
    const n = Math.abs(t.c.n);
    if (n !== 1 || numerator.length === 0) numerator.unshift(String(n));
    if (t.c.d !== 1) denominator.unshift(String(t.c.d));
  } else {
    const magnitude = Math.abs(value);
    if (magnitude !== 1 || numerator.length === 0) numerator.unshift(formatNumber(magnitude));
  }
  const top = numerator.join("*");
  if (denominator.length === 1) bottom = denominator[0]!;
  else if (denominator.length > 1) bottom = `(${denominator.join("*")})`;
  const text = bottom === null ? top : `${top}/${bottom}`;
  return negative ? `-${text}` : text;
}

function formatFactor(space: SymbolSpace, id: number, e: number): string {
  const entry = space.entry(id);
  switch (entry.kind) {
    case "function":
      return withExponent(`${entry.fn}(${formatPoly(space, entry.arg!)})`, e, false);
    case "power": {
      const base = formatPoly(space, entry.base!);
      if (e === 0.5) return `sqrt(${base})`;
      return withExponent(isAtomic(base) ? base : `(${base})`, e, false);
    }
    case "phase":
      return withExponent(`(${formatTerm(space, entry.phase!)}*t)`, e, false);
    case "rate":
      return withExponent(`${entry.name}'`, e, false);
    case "acceleration":
      return withExponent(`${entry.name}''`, e, false);
    default:
      return withExponent(entry.name, e, true);
  }
}

function isAtomic(text: string): boolean {
  return /^[A-Za-z_][A-Za-z0-9_]*'{0,2}$/.test(text) || /^\d+$/.test(text);
}

function withExponent(base: string, e: number, plain: boolean): string {
  if (e === 1) return base;
  if (plain && e === 0.5) return `sqrt(${base})`;
  if (Number.isInteger(e)) return `${base}^${e}`;
  const [p, q] = toFraction(e);
  return q === 1 ? `${base}^${p}` : Number.isFinite(q) ? `${base}^(${p}/${q})` : `${base}^${formatNumber(e)}`;
}

/** A small-denominator fraction equal to x (to 1e-12), or [x, Infinity] if none. */
export function toFraction(x: number): [number, number] {
  for (let q = 1; q <= 1000; q++) {
    const p = Math.round(x * q);
    if (Math.abs(p / q - x) < 1e-12) return [p, q];
  }
  return [x, Infinity];
}

function formatTrig(space: SymbolSpace, g: Trig): string {
  let text = "";
  for (let i = 0; i < g.combo.length; i += 2) {
    const id = g.combo[i]!;
    const c = g.combo[i + 1]!;
    const entry = space.entry(id);
    const magnitude = Math.abs(c);
    let body: string;
    if (entry.kind === "one") body = formatMagnitude(magnitude);
    else {
      const name = entry.kind === "phase" ? phaseText(space, entry.phase!) : entry.name;
      const [p, q] = toFraction(magnitude);
      if (!Number.isFinite(q)) body = `${formatNumber(magnitude)}*${name}`;
      else body = `${p === 1 ? "" : `${p}*`}${name}${q === 1 ? "" : `/${q}`}`;
    }
    if (i === 0) text = c < 0 ? `-${body}` : body;
    else text += c < 0 ? ` - ${body}` : ` + ${body}`;
  }
  return `${g.sin ? "sin" : "cos"}(${text})`;
}

function formatMagnitude(x: number): string {
  const [p, q] = toFraction(x);
  return Number.isFinite(q) && q !== 1 ? `${p}/${q}` : formatNumber(x);
}

function phaseText(space: SymbolSpace, monomial: Term): string {
  const text = formatTerm(space, monomial);
  if (text === "1") return "t";
  // omega → omega*t;  1/tau → t/tau
  if (text.startsWith("1/")) return `t${text.slice(1)}`;
  const slash = text.indexOf("/");
  return slash < 0 ? `${text}*t` : `${text.slice(0, slash)}*t${text.slice(slash)}`;
}
