// Numbers and times for people.

const SUP = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' };

// superscript writes an integer exponent as superscript digits.
export function superscript(n) {
  return String(n).replace(/[-0-9]/g, (c) => SUP[c]);
}

// fmtNum writes x with about `digits` significant digits, switching to
// a × 10ⁿ form for very small or large magnitudes.
export function fmtNum(x, digits = 3) {
  if (x === null || x === undefined || Number.isNaN(x)) return '–';
  if (!Number.isFinite(x)) return x > 0 ? '∞' : '−∞';
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e-3 && a < 1e5) {
    return String(Number(x.toPrecision(digits))).replace('-', '−');
  }
  const e = Math.floor(Math.log10(a));
  const m = x / 10 ** e;
  const ms = trimZeros(m.toPrecision(digits));
  return `${ms.replace('-', '−')}×10${superscript(e)}`;
}

function trimZeros(s) {
  if (!s.includes('.') || s.includes('e')) return s;
  return s.replace(/\.?0+$/, '');
}

const pad = (n) => String(n).padStart(2, '0');

// fmtClock writes a simulated time as "3 d 04:05:06" (or "04:05:06").
export function fmtClock(t) {
  if (!Number.isFinite(t)) return '–';
  const sign = t < 0 ? '−' : '';
  let s = Math.abs(t);
  const d = Math.floor(s / 86400);
  s -= d * 86400;
  const h = Math.floor(s / 3600);
  s -= h * 3600;
  const m = Math.floor(s / 60);
  s -= m * 60;
  const sec = s < 10 && s !== Math.floor(s) ? s.toFixed(1).padStart(4, '0') : pad(Math.floor(s));
  return `${sign}${d > 0 ? `${d} d ` : ''}${pad(h)}:${pad(m)}:${sec}`;
}

// timeUnit picks a unit for a time span: [seconds per unit, name].
export function timeUnit(span) {
  if (span >= 3 * 86400) return [86400, 'd'];
  if (span >= 3 * 3600) return [3600, 'h'];
  if (span >= 180) return [60, 'min'];
  return [1, 's'];
}

// niceStep returns a round step giving about n intervals over span.
export function niceStep(span, n) {
  if (!(span > 0)) return 1;
  const raw = span / n;
  const p = 10 ** Math.floor(Math.log10(raw));
  const f = raw / p;
  return (f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10) * p;
}

// fmtTick writes a tick value with as many decimals as the step needs.
export function fmtTick(v, step) {
  const d = Math.max(0, Math.min(10, -Math.floor(Math.log10(step) + 1e-9)));
  return v.toFixed(d).replace('-', '−');
}

// tickDigits is the number of significant digits that tells the ticks of
// a list apart: at least 3, more when the step is small against the values
// (999.5, 1000, 1000.5 need 5).
export function tickDigits(vals) {
  if (vals.length < 2) return 3;
  const step = vals[1] - vals[0];
  const a = Math.max(...vals.map(Math.abs));
  if (!(step > 0) || !(a > 0)) return 3;
  return Math.min(15, Math.max(3, Math.floor(Math.log10(a)) - Math.floor(Math.log10(step) + 1e-9) + 1));
}

// ticks returns round values covering [lo, hi]. Each is computed from its
// index, not by adding steps: over a span near the round-off of lo (a
// minimum depth that moves by 1e-13 m) v + step can equal v.
export function ticks(lo, hi, n) {
  const step = niceStep(hi - lo, n);
  const out = [];
  const k0 = Math.ceil(lo / step);
  for (let i = 0; i <= 4 * n + 2; i++) {
    const v = (k0 + i) * step;
    if (v > hi + step * 1e-9) break;
    if (out.length && v <= out[out.length - 1]) continue; // below the resolution of a float
    out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  }
  return out;
}
