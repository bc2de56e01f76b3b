// FieldCanvas is one canvas that shows a field on whichever grid arrives:
// the plane (FieldView) or the sphere (SphereView, globe or map). Only the
// view in use takes the pointer; a ringed point moves with the switch.

import { FieldView } from './fieldview.js';
import { SphereView } from './globe.js';

export class FieldCanvas {
  constructor(canvas) {
    this.plane = new FieldView(canvas);
    this.sphere = new SphereView(canvas);
    this.view = this.plane;
  }

  setGeometry(g) {
    const v = g.sphere ? this.sphere : this.plane;
    if (v !== this.view) {
      if (v === this.sphere) this.plane.projection = null; // the next plane is fitted afresh
      v.highlight = this.view.highlight;
      this.plane.active = v === this.plane;
      this.sphere.active = v === this.sphere;
      this.view = v;
    }
    v.setGeometry(g);
  }

  set onchange(f) {
    this.plane.onchange = f;
    this.sphere.onchange = f;
  }

  // drawing names how fields are drawn now: 'plane', 'globe' or 'lonlat'.
  get drawing() { return this.view === this.sphere ? this.sphere.choice : 'plane'; }
}
