/**
 * A run's watched series as stored (`study_runs.series`): float32
 * little-endian, one block of grid points per watched name in watch order.
 * Half the bytes of float64 and ample for a plotted band (7 significant
 * digits); the run's extremes are kept exactly beside it. NaN marks a grid
 * point a failed run did not reach.
 */
export function encodeSeries(series: Record<string, readonly number[]>, names: readonly string[], points: number): Uint8Array {
  const bytes = new Uint8Array(names.length * points * 4);
  const view = new DataView(bytes.buffer);
  names.forEach((name, i) => {
    const values = series[name] ?? [];
    for (let k = 0; k < points; k++) {
      const v = values[k];
      view.setFloat32((i * points + k) * 4, typeof v === "number" ? v : NaN, true);
    }
  });
  return bytes;
}

/** The stored series back as one array per watched name; a block missing from a short blob reads as NaN. */
export function decodeSeries(bytes: Uint8Array, names: number, points: number): number[][] {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  return Array.from({ length: names }, (_, i) =>
    Array.from({ length: points }, (_, k) => {
      const offset = (i * points + k) * 4;
      return offset + 4 <= bytes.byteLength ? view.getFloat32(offset, true) : NaN;
    }),
  );
}
