package display

import "math"

// polarLat is how close to ±90° a corner's latitude must be for the corner
// to be taken as the pole itself. Latitude from asin loses precision near
// the poles (a rounding of z/R by one unit in the last place moves it by
// about 1e-6°), so the margin is wider than that; 1e-4° is about 10 m on
// the Earth, far below any cell.
const polarLat = 90 - 1e-4

// Map returns the polygons of p (from the same Geometry) ready to fill on
// the map. On the plane it is p itself, sharing its arrays. On the sphere
// it is a new set built as the package documentation describes: longitudes
// unwrapped corner by corner from the first corner that is not at a pole,
// bands closed along the pole's latitude, corners at a pole replaced by
// the stretch of the pole's latitude between their neighbours' longitudes.
func (g *Geometry) Map(p *Polygons) Polygons {
	if !g.Sphere {
		return *p
	}
	n := p.Len()
	out := Polygons{
		XY:     make([]float64, 0, len(p.XY)+64),
		Start:  make([]int32, n+1),
		Centre: p.Centre,
	}
	var ring []float64 // the polygon being unwrapped, reused
	for i := range n {
		ring = append(ring[:0], p.Corners(i)...)
		out.XY = appendMapPolygon(out.XY, ring, p.Centre[2*i+1])
		out.Start[i+1] = int32(len(out.XY) / 2)
	}
	return out
}

// appendMapPolygon appends the map polygon of ring (lon, lat interleaved,
// each longitude already the image nearest the centre's), whose centre
// has latitude clat, to xy, unwrapping ring in place.
func appendMapPolygon(xy, ring []float64, clat float64) []float64 {
	n := len(ring) / 2
	polar := func(k int) bool { return math.Abs(ring[2*k+1]) > polarLat }
	first, prev, started, anyPolar := 0.0, 0.0, false, false
	for k := range n {
		if polar(k) {
			anyPolar = true
			continue
		}
		x := ring[2*k]
		if started {
			x -= 360 * math.Round((x-prev)/360)
		} else {
			first, started = x, true
		}
		ring[2*k], prev = x, x
	}
	switch {
	case !started: // every corner at a pole: nothing to unwrap
		return append(xy, ring...)
	case anyPolar:
		for k := range n {
			if !polar(k) {
				xy = append(xy, ring[2*k], ring[2*k+1])
				continue
			}
			pole := math.Copysign(90, ring[2*k+1])
			before, after := ring[2*((k+n-1)%n)], ring[2*((k+1)%n)]
			xy = append(xy, before, pole, after, pole)
		}
		return xy
	}
	xy = append(xy, ring...)
	// A ring that winds once round a pole ends 360° from where it began.
	if end := first - 360*math.Round((first-prev)/360); math.Abs(end-first) > 180 {
		pole := 90.0
		if clat < 0 {
			pole = -90
		}
		xy = append(xy, end, ring[1], end, pole, first, pole)
	}
	return xy
}
