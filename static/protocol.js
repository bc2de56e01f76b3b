// Decoding of the binary websocket messages. The layouts are documented in
// the Go package server (doc.go); every section is 4-byte aligned so the
// arrays below are views on the received buffer, not copies.

export const GEOMETRY = 1;
export const FRAME = 2;

export function decodeBinary(buf) {
  const dv = new DataView(buf);
  const kind = dv.getUint8(0);
  if (kind === GEOMETRY) return decodeGeometry(buf, dv);
  if (kind === FRAME) return decodeFrame(buf, dv);
  throw new Error(`unknown binary message kind ${kind}`);
}

function decodeGeometry(buf, dv) {
  const sphere = dv.getUint8(1) === 1;
  const gen = dv.getUint32(4, true);
  const nCells = dv.getUint32(8, true);
  const nVerts = dv.getUint32(12, true);
  const nCellPts = dv.getUint32(16, true);
  const nDualPts = dv.getUint32(20, true);
  const periodX = dv.getFloat64(32, true);
  const periodY = dv.getFloat64(40, true);
  let o = 48;
  const cellStart = new Uint32Array(buf, o, nCells + 1);
  o += 4 * (nCells + 1);
  const dualStart = new Uint32Array(buf, o, nVerts + 1);
  o += 4 * (nVerts + 1);
  const cellXY = new Float32Array(buf, o, 2 * nCellPts);
  o += 8 * nCellPts;
  const dualXY = new Float32Array(buf, o, 2 * nDualPts);
  const extent = sphere
    ? { x0: -180, x1: 180, y0: -90, y1: 90 }
    : { x0: 0, x1: periodX, y0: 0, y1: periodY };
  return {
    kind: 'geometry', gen, sphere, periodX, periodY, extent,
    // polys[location]: 0 = cells, 1 = vertices (dual polygons)
    polys: [
      { n: nCells, start: cellStart, xy: cellXY },
      { n: nVerts, start: dualStart, xy: dualXY },
    ],
  };
}

function decodeFrame(buf, dv) {
  const count = dv.getUint32(12, true);
  return {
    kind: 'frame',
    field: dv.getUint8(1),
    loc: dv.getUint8(2),
    gen: dv.getUint32(4, true),
    skipped: dv.getUint32(8, true),
    t: dv.getFloat64(16, true),
    steps: dv.getFloat64(24, true),
    min: dv.getFloat32(32, true),
    max: dv.getFloat32(36, true),
    values: new Float32Array(buf, 40, count),
  };
}

// SIDE_TAGS name byte 3 of a pair's binary messages: which side's
// geometry or frame it is, or the difference A − B.
const SIDE_TAGS = { 1: 'a', 2: 'b', 3: 'diff' };

export function sideOf(buf) {
  return SIDE_TAGS[new Uint8Array(buf, 3, 1)[0]];
}
