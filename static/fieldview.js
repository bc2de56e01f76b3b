// FieldView draws a field on the plane's own polygons: cell fields on the
// primal cells, vertex fields on the dual polygons round each vertex. The
// periodic plane is drawn as repeated tiles (TiledMap in raster.js), so
// panning past an edge shows the neighbouring image of the domain.

import { MeshView, TiledMap, withBoxes, ring } from './raster.js';

export class FieldView extends MeshView {
  setGeometry(g) {
    const old = this.projection;
    const { x0, x1, y0, y1 } = g.extent;
    this.geom = g;
    this.frame = null;
    this.projection = new TiledMap({
      name: 'plane', extent: g.extent, periodX: g.periodX, periodY: g.periodY,
      cellSize: Math.sqrt(((x1 - x0) * (y1 - y0)) / Math.max(1, g.polys[0].n)),
      polys: g.polys.map(withBoxes),
    });
    // The same domain keeps its pan and zoom across a change of grid.
    if (!old || !this.projection.follow(old.state())) this.fit();
    this.invalidate();
  }

  drawOverlays() {
    const ctx = this.ctx, p = this.projection;
    const W = this.canvas.width, H = this.canvas.height;
    const dpr = window.devicePixelRatio || 1;
    p.veil(ctx, W, H, [6, 5]);
    const h = this.highlight;
    if (!h || !Number.isFinite(h.x)) return;
    const r = Math.max(14 * dpr, 2.5 * p.cellPixels());
    const kxs = p.periodX > 0 ? [-1, 0, 1] : [0];
    const kys = p.periodY > 0 ? [-1, 0, 1] : [0];
    for (const kx of kxs) {
      for (const ky of kys) {
        const [x, y] = p.toPixel(h.x, h.y, W, H, kx, ky);
        if (x < -r || y < -r || x > W + r || y > H + r) continue;
        ring(ctx, x, y, r, true);
      }
    }
  }
}
