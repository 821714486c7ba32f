import { describe, expect, it } from "vitest";
import { layoutOf } from "@/components/notebook/simulation/mechanism-animation";
import { nextPoint, pointSourcesOf, suggestPoints } from "@/components/notebook/simulation/mechanism-points";
import { modelToDocument } from "@/lib/notebook/document";
import { templateModel } from "@/lib/notebook/templates";

const sourcesOf = (id: Parameters<typeof templateModel>[0], links?: number) => pointSourcesOf(modelToDocument(templateModel(id, { links })));

describe("suggested mechanism points", () => {
  it("puts the trolley on its girder before the load that hangs from it", () => {
    expect(suggestPoints(sourcesOf("cart-with-pendulum"))).toEqual([
      { x: "x", y: "0" },
      { x: "xL", y: "yL" },
    ]);
  });

  it("orders a chain's joints from the pivot outwards", () => {
    const points = suggestPoints(sourcesOf("n-link-chain", 3));
    expect(points.map((p) => [p.x, p.y])).toEqual([
      ["x1", "y1"],
      ["x2", "y2"],
      ["x3", "y3"],
    ]);
  });

  it("moves a length coordinate named for height vertically, and skips angles", () => {
    expect(
      suggestPoints({
        coordinates: [
          { name: "z", unit: "m" },
          { name: "phi", unit: "rad" },
        ],
        definitions: [],
      }),
    ).toEqual([{ x: "0", y: "z" }]);
    expect(suggestPoints(sourcesOf("single-pendulum"))).toEqual([]);
  });

  it("pairs suffix-named definitions and offers the next one not drawn yet", () => {
    const sources = {
      coordinates: [],
      definitions: [
        { name: "p_x", expr: "1" },
        { name: "p_y", expr: "2" },
        { name: "bx", expr: "3" },
        { name: "by", expr: "4" },
      ],
    };
    expect(suggestPoints(sources)).toEqual([
      { x: "p_x", y: "p_y" },
      { x: "bx", y: "by" },
    ]);
    expect(nextPoint(sources, [{ x: "p_x", y: "p_y" }])).toEqual({ x: "bx", y: "by" });
  });
});

describe("mechanism layout read off the tracks", () => {
  // Trolley at x(t) on the girder, load on a 2 m rope at angle θ(t) (geometry of the cart template).
  const times = Array.from({ length: 50 }, (_, k) => k * 0.1);
  const x = times.map((t) => 0.5 * Math.sin(t));
  const theta = times.map((t) => 0.4 * Math.cos(1.7 * t));
  const trolley = { xName: "x", yName: "0", x, y: times.map(() => 0) };
  const load = { xName: "xL", yName: "yL", x: x.map((xi, k) => xi + 2 * Math.sin(theta[k]!)), y: theta.map((th) => -2 * Math.cos(th)) };

  it("draws a moving support as a carriage with the load on a rigid link, and no pivot at the origin", () => {
    expect(layoutOf([trolley, load], 3)).toEqual({ motions: ["horizontal", "free"], rigidToPrevious: [false, true], pivotAtOrigin: false });
  });

  it("draws a fixed pivot when the first point swings about the origin", () => {
    const bob = { xName: "xb", yName: "yb", x: theta.map((th) => 2 * Math.sin(th)), y: theta.map((th) => -2 * Math.cos(th)) };
    expect(layoutOf([bob], 2)).toEqual({ motions: ["free"], rigidToPrevious: [false], pivotAtOrigin: true });
  });

  it("joins two sleds whose distance changes by a non-rigid link", () => {
    const second = { xName: "x2", yName: "0", x: x.map((v) => 1 - 0.5 * v), y: times.map(() => 0) };
    expect(layoutOf([trolley, second], 2).rigidToPrevious).toEqual([false, false]);
  });
});
