// Sizing of the page's canvases: each canvas keeps as many pixels as its
// box has device pixels, so that drawings stay sharp at any zoom.

// fitToBox matches the canvas's pixels to its box; it reports a change.
export function fitToBox(canvas) {
  const dpr = window.devicePixelRatio || 1;
  const w = Math.max(1, Math.round(canvas.clientWidth * dpr));
  const h = Math.max(1, Math.round(canvas.clientHeight * dpr));
  if (w === canvas.width && h === canvas.height) return false;
  canvas.width = w;
  canvas.height = h;
  return true;
}

// cssContext fits the canvas to its box and returns its context, cleared
// and scaled so that one unit is one CSS pixel, with the box's size in
// those units.
export function cssContext(canvas) {
  fitToBox(canvas);
  const dpr = window.devicePixelRatio || 1;
  const ctx = canvas.getContext('2d');
  const w = canvas.width / dpr, h = canvas.height / dpr;
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, w, h);
  return { ctx, w, h };
}
