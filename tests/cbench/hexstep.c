/*
 * hexstep: a single-threaded C implementation of the trisk-energy
 * tendency with the three-stage SSP Runge–Kutta step on the doubly
 * periodic hexagonal plane, the yardstick for `gyrebench bench`.
 *
 * It builds its own mesh (n × n hexagons, n even, rows offset by half a
 * cell) and stores the metric per element, as an unstructured code does,
 * then runs the same discrete operator as gyrebench's scheme:
 *
 *   q_v  = (Σ_e t_{e,v} d_e u_e + f A_v) / Σ_i K_{i,v} h_i
 *   F_e  = l_e (h_{c0} + h_{c1})/2 u_e
 *   ∂h_i/∂t = −(1/A_i) Σ_e n_{e,i} F_e
 *   Φ_i  = (1/4A_i) Σ_e l_e d_e u_e² + g h_i
 *   ∂u_e/∂t = (T^{c0}_e − T^{c1}_e)/d_e
 *
 * with the cell shares T^i_e = ½(q_e G^i_e[F] + G^i_e[q F]) + Φ_i of the
 * energy-conserving TRiSK PV flux (Ringler, Thuburn, Klemp & Skamarock
 * 2010, J. Comput. Phys. 229, eqs. 21, 26, 49; weights of Thuburn et al.
 * 2009, J. Comput. Phys. 228, eq. 33, summed per cell by the recurrence
 * G_0 = ½(A − a_0) − B, G_{j+1} = G_j + R_j A − ½(a_j + a_{j+1})), and
 * x1 = x + Δt f(x), x2 = ¾x + ¼(x1 + Δt f(x1)), x' = ⅓x + ⅔(x2 + Δt f(x2))
 * (Shu & Osher 1988, J. Comput. Phys. 77, eq. 2.18), each stage finished
 * inside the cell and edge passes.
 *
 * Usage: hexstep N STEPS [phases]. Prints one line of JSON: the
 * cell-steps per second of the timed steps (after one untimed step), the
 * fastest single step, and the relative drifts of mass and energy as a
 * check that the operator is the conservative one (mass to round-off,
 * energy to the time-stepping error). With "phases" it first prints one
 * more line: the fastest of 200 calls of each pass, in ns per cell, as
 * `go test -bench Phases ./sim/scheme` reports gyrebench's.
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

typedef struct {
	int nc, ne, nv;
	int32_t *edge_cells;  /* 2 per edge: c0, c1 (n_e points c0 → c1) */
	int32_t *cell_side;   /* 6 per cell: 2e + o, o = 1 where n_e points in */
	int32_t *cell_vert;   /* 6 per cell: the vertex after edge m, anticlockwise */
	double *cell_r;       /* 6 per cell: kite fraction K/A of that vertex */
	int32_t *vert_edge;   /* 3 per vertex */
	double *vert_td;      /* 3 per vertex: t_{e,v} d_e */
	int32_t *vert_cell;   /* 3 per vertex */
	double *vert_kite;    /* 3 per vertex */
	double *l, *d, *inv_area, *vert_area, *fv;
} mesh;

static int wrap(int i, int n) { return ((i % n) + n) % n; }

static void *alloc(size_t n) {
	void *p = aligned_alloc(64, (n + 63) / 64 * 64); /* a multiple of the alignment */
	if (!p) {
		fprintf(stderr, "hexstep: out of memory\n");
		exit(1);
	}
	return p;
}

/* Neighbours of cell (i, j): 0 E, 1 NE, 2 NW, 3 W, 4 SW, 5 SE. */
static int neighbour(int i, int j, int k, int n) {
	int odd = j & 1;
	switch (k) {
	case 0: return wrap(j, n) * n + wrap(i + 1, n);
	case 1: return wrap(j + 1, n) * n + wrap(i + odd, n);
	case 2: return wrap(j + 1, n) * n + wrap(i - 1 + odd, n);
	case 3: return wrap(j, n) * n + wrap(i - 1, n);
	case 4: return wrap(j - 1, n) * n + wrap(i - 1 + odd, n);
	default: return wrap(j - 1, n) * n + wrap(i + odd, n);
	}
}

/*
 * Cell c owns three edges (3c: E, 3c+1: NE, 3c+2: NW, each with c0 = c)
 * and two vertices (2c: at 30°, shared with E and NE; 2c+1: at 90°,
 * shared with NE and NW). Dual spacing dx, primal edge s = dx/√3.
 */
static mesh build(int n, double dx) {
	mesh m;
	m.nc = n * n, m.ne = 3 * n * n, m.nv = 2 * n * n;
	m.edge_cells = alloc(2 * (size_t)m.ne * sizeof(int32_t));
	m.cell_side = alloc(6 * (size_t)m.nc * sizeof(int32_t));
	m.cell_vert = alloc(6 * (size_t)m.nc * sizeof(int32_t));
	m.cell_r = alloc(6 * (size_t)m.nc * sizeof(double));
	m.vert_edge = alloc(3 * (size_t)m.nv * sizeof(int32_t));
	m.vert_td = alloc(3 * (size_t)m.nv * sizeof(double));
	m.vert_cell = alloc(3 * (size_t)m.nv * sizeof(int32_t));
	m.vert_kite = alloc(3 * (size_t)m.nv * sizeof(double));
	m.l = alloc((size_t)m.ne * sizeof(double));
	m.d = alloc((size_t)m.ne * sizeof(double));
	m.inv_area = alloc((size_t)m.nc * sizeof(double));
	m.vert_area = alloc((size_t)m.nv * sizeof(double));
	m.fv = alloc((size_t)m.nv * sizeof(double));
	double s = dx / sqrt(3.0), area = 1.5 * sqrt(3.0) * s * s;
	for (int j = 0; j < n; j++) {
		for (int i = 0; i < n; i++) {
			int c = j * n + i, nb[6];
			for (int k = 0; k < 6; k++) nb[k] = neighbour(i, j, k, n);
			for (int k = 0; k < 3; k++) {
				m.edge_cells[2 * (3 * c + k)] = c;
				m.edge_cells[2 * (3 * c + k) + 1] = nb[k];
				m.l[3 * c + k] = s;
				m.d[3 * c + k] = dx;
			}
			int side[6] = {2 * (3 * c), 2 * (3 * c + 1), 2 * (3 * c + 2),
				2 * (3 * nb[3]) + 1, 2 * (3 * nb[4] + 1) + 1, 2 * (3 * nb[5] + 2) + 1};
			/* vertices at 30°, 90°, 150°, 210°, 270°, 330° */
			int vert[6] = {2 * c, 2 * c + 1, 2 * nb[3] + 1, 2 * nb[4] + 1, 2 * nb[4], 2 * nb[5] + 1};
			for (int k = 0; k < 6; k++) {
				m.cell_side[6 * c + k] = side[k];
				m.cell_vert[6 * c + k] = vert[k];
				m.cell_r[6 * c + k] = (area / 6) * (1 / area);
			}
			m.inv_area[c] = 1 / area;
			/* vertex 2c: cells c, E, NE; dual edges c→E (+), E→NE (+), c→NE (−) */
			int v = 2 * c, e3[3] = {3 * c, 3 * nb[0] + 2, 3 * c + 1}, c3[3] = {c, nb[0], nb[1]};
			double t3[3] = {1, 1, -1};
			for (int k = 0; k < 3; k++) {
				m.vert_edge[3 * v + k] = e3[k];
				m.vert_td[3 * v + k] = t3[k] * dx;
				m.vert_cell[3 * v + k] = c3[k];
				m.vert_kite[3 * v + k] = area / 6;
			}
			/* vertex 2c+1: cells c, NE, NW; c→NE (+), NW→NE (−), c→NW (−) */
			v = 2 * c + 1;
			int f3[3] = {3 * c + 1, 3 * nb[2], 3 * c + 2}, d3[3] = {c, nb[1], nb[2]};
			double u3[3] = {1, -1, -1};
			for (int k = 0; k < 3; k++) {
				m.vert_edge[3 * v + k] = f3[k];
				m.vert_td[3 * v + k] = u3[k] * dx;
				m.vert_cell[3 * v + k] = d3[k];
				m.vert_kite[3 * v + k] = area / 6;
			}
			m.vert_area[2 * c] = m.vert_area[2 * c + 1] = area / 2;
			m.fv[2 * c] = m.fv[2 * c + 1] = 1e-4;
		}
	}
	return m;
}

typedef struct {
	mesh m;
	double g;
	double *q, *fk, *tt; /* vertices; 2 per edge: F, l d u²; 2 per edge: T^{c0}, T^{c1} */
} solver;

static void vertices(solver *s, const double *h, const double *u) {
	const mesh *m = &s->m;
	for (int v = 0; v < m->nv; v++) {
		const int32_t *e = m->vert_edge + 3 * v, *c = m->vert_cell + 3 * v;
		const double *td = m->vert_td + 3 * v, *k = m->vert_kite + 3 * v;
		double circ = td[0] * u[e[0]] + td[1] * u[e[1]] + td[2] * u[e[2]];
		double hv = k[0] * h[c[0]] + k[1] * h[c[1]] + k[2] * h[c[2]];
		s->q[v] = (circ + m->fv[v] * m->vert_area[v]) / hv;
	}
}

static void edges(solver *s, const double *h, const double *u, int lo, int hi) {
	const mesh *m = &s->m;
	for (int e = lo; e < hi; e++) {
		double he = 0.5 * (h[m->edge_cells[2 * e]] + h[m->edge_cells[2 * e + 1]]);
		s->fk[2 * e] = m->l[e] * he * u[e];
		s->fk[2 * e + 1] = m->l[e] * m->d[e] * u[e] * u[e];
	}
}

/* cells sets the shares T and finishes the stage for h: h ← a h0 + b (h + Δt ∂h/∂t). */
static void cells(solver *s, double *h, const double *h0, double a, double b, double dt) {
	const mesh *m = &s->m;
	const double *q = s->q, *fk = s->fk;
	double *tt = s->tt;
	for (int i = 0; i < m->nc; i++) {
		const int32_t *sd = m->cell_side + 6 * i, *vt = m->cell_vert + 6 * i;
		const double *r = m->cell_r + 6 * i;
		double inv = m->inv_area[i];
		double qv[6], qe[6], av[6], bv[6];
		for (int k = 0; k < 6; k++) qv[k] = q[vt[k]];
		double sa = 0, sb = 0, ta = 0, tb = 0, ke = 0, cm = 0;
		for (int k = 0; k < 6; k++) {
			qe[k] = 0.5 * (qv[(k + 5) % 6] + qv[k]);
			double f = fk[2 * (sd[k] >> 1)];
			av[k] = (sd[k] & 1) ? -f : f;
			bv[k] = qe[k] * av[k];
			sa += av[k];
			sb += bv[k];
			ta += cm * av[k];
			tb += cm * bv[k];
			ke += fk[2 * (sd[k] >> 1) + 1];
			cm += r[k];
		}
		double phi = 0.25 * ke * inv + s->g * h[i];
		double dh = -sa * inv;
		h[i] = (a == 0 && b == 1) ? h[i] + dt * dh : a * h0[i] + b * (h[i] + dt * dh);
		double ga = 0.5 * (sa - av[0]) - ta, gb = 0.5 * (sb - bv[0]) - tb;
		tt[sd[0]] = 0.5 * (qe[0] * ga + gb) + phi;
		for (int k = 1; k < 6; k++) {
			ga += r[k - 1] * sa - 0.5 * (av[k - 1] + av[k]);
			gb += r[k - 1] * sb - 0.5 * (bv[k - 1] + bv[k]);
			tt[sd[k]] = 0.5 * (qe[k] * ga + gb) + phi;
		}
	}
}

/* finish finishes the stage for u on [lo, hi). */
static void finish(solver *s, double *u, const double *u0, double a, double b, double dt, int lo, int hi) {
	const double *tt = s->tt, *d = s->m.d;
	if (a == 0 && b == 1) {
		for (int e = lo; e < hi; e++) u[e] += dt * ((tt[2 * e] - tt[2 * e + 1]) / d[e]);
		return;
	}
	for (int e = lo; e < hi; e++) u[e] = a * u0[e] + b * (u[e] + dt * ((tt[2 * e] - tt[2 * e + 1]) / d[e]));
}

/* step advances x = [h | u] by one rk3 step; x0 is scratch. The edge pass
 * of the next stage runs block by block right after its u is finished. */
static void step(solver *s, double *x, double *x0, double dt) {
	const mesh *m = &s->m;
	double *h = x, *u = x + m->nc;
	const double *h0 = x0, *u0 = x0 + m->nc;
	static const double A[3] = {0, 0.75, 1.0 / 3}, B[3] = {1, 0.25, 2.0 / 3};
	for (size_t k = 0; k < (size_t)(m->nc + m->ne); k++) x0[k] = x[k];
	edges(s, h, u, 0, m->ne);
	for (int st = 0; st < 3; st++) {
		vertices(s, h, u);
		cells(s, h, h0, A[st], B[st], dt);
		for (int lo = 0; lo < m->ne; lo += 512) {
			int hi = lo + 512 < m->ne ? lo + 512 : m->ne;
			finish(s, u, u0, A[st], B[st], dt, lo, hi);
			if (st < 2) edges(s, h, u, lo, hi);
		}
	}
}

static void invariants(const solver *s, const double *x, double *mass, double *energy) {
	const mesh *m = &s->m;
	const double *h = x, *u = x + m->nc;
	double ms = 0, en = 0;
	for (int i = 0; i < m->nc; i++) {
		ms += h[i] / m->inv_area[i];
		en += 0.5 * s->g * h[i] * h[i] / m->inv_area[i];
	}
	for (int e = 0; e < m->ne; e++) {
		double he = 0.5 * (h[m->edge_cells[2 * e]] + h[m->edge_cells[2 * e + 1]]);
		en += 0.5 * m->l[e] * m->d[e] * he * u[e] * u[e];
	}
	*mass = ms, *energy = en;
}

static double now(void) {
	struct timespec t;
	clock_gettime(CLOCK_MONOTONIC, &t);
	return t.tv_sec + 1e-9 * t.tv_nsec;
}

/* phases prints the fastest of 200 calls of each pass in ns per cell, on
 * a copy of the state (the cell and finishing passes change what they
 * finish), with a stage of Δt = 0 so that the state does not move. */
static void phases(solver *s, const double *x) {
	const mesh *m = &s->m;
	size_t nx = (size_t)(m->nc + m->ne);
	double *y = alloc(nx * sizeof(double)), *y0 = alloc(nx * sizeof(double));
	for (size_t k = 0; k < nx; k++) y[k] = y0[k] = x[k];
	double *h = y, *u = y + m->nc;
	const char *names[4] = {"vertices", "edges", "cells", "finish"};
	printf("{\"phases_ns_per_cell\":{");
	for (int ph = 0; ph < 4; ph++) {
		double best = 1e30;
		for (int r = 0; r < 200; r++) {
			double t = now();
			switch (ph) {
			case 0: vertices(s, h, u); break;
			case 1: edges(s, h, u, 0, m->ne); break;
			case 2: cells(s, h, y0, 0.75, 0.25, 0); break;
			default: finish(s, u, y0 + m->nc, 0.75, 0.25, 0, 0, m->ne); break;
			}
			double el = now() - t;
			if (el < best) best = el;
		}
		printf("%s\"%s\":%.2f", ph ? "," : "", names[ph], best * 1e9 / m->nc);
	}
	printf("}}\n");
	free(y);
	free(y0);
}

int main(int argc, char **argv) {
	int with_phases = argc == 4 && strcmp(argv[3], "phases") == 0;
	if (argc != 3 && !with_phases) {
		fprintf(stderr, "usage: hexstep N STEPS [phases] (N even, at least 4)\n");
		return 2;
	}
	int n = atoi(argv[1]), steps = atoi(argv[2]);
	if (n < 4 || n % 2 || n > 4096 || steps < 1) {
		fprintf(stderr, "hexstep: N = %s must be even and in [4, 4096], STEPS = %s at least 1\n", argv[1], argv[2]);
		return 2;
	}
	double dx = 1e6 / 64; /* the spacing `gyrebench bench` uses on the plane */
	solver s = {build(n, dx), 9.80616, 0, 0, 0};
	const mesh *m = &s.m;
	s.q = alloc((size_t)m->nv * sizeof(double));
	s.fk = alloc(2 * (size_t)m->ne * sizeof(double));
	s.tt = alloc(2 * (size_t)m->ne * sizeof(double));
	size_t nx = (size_t)(m->nc + m->ne);
	double *x = alloc(nx * sizeof(double)), *x0 = alloc(nx * sizeof(double));
	/* a smooth doubly periodic depth perturbation of 10 m */
	for (int j = 0; j < n; j++)
		for (int i = 0; i < n; i++)
			x[j * n + i] = 1000 + 10 * sin(2 * M_PI * i / n) * cos(2 * M_PI * j / n);
	for (size_t k = 0; k < nx; k++) x0[k] = 0;
	for (int k = 0; k < 2 * m->ne; k++) s.fk[k] = s.tt[k] = 0;
	/* Self-check of the vertex orientation: a uniform flow has no
	 * circulation about any vertex (edge k of a cell has its normal at
	 * 60k degrees). */
	for (int e = 0; e < m->ne; e++) x[m->nc + e] = 3 * cos(M_PI / 3 * (e % 3)) + 4 * sin(M_PI / 3 * (e % 3));
	for (int v = 0; v < m->nv; v++) {
		double circ = 0;
		for (int k = 0; k < 3; k++) circ += m->vert_td[3 * v + k] * x[m->nc + m->vert_edge[3 * v + k]];
		if (fabs(circ) > 1e-9 * dx) {
			fprintf(stderr, "hexstep: uniform flow has circulation %g about vertex %d: orientation is wrong\n", circ, v);
			return 1;
		}
	}
	/* a smooth zonal jet u = 10 sin(2πy/L) m/s, along each edge normal */
	for (int e = 0; e < m->ne; e++) {
		int c = e / 3, k = e % 3, j = c / n;
		double y = (j + 0.5 * sin(M_PI / 3 * k)) / n;
		x[m->nc + e] = 10 * sin(2 * M_PI * y) * cos(M_PI / 3 * k);
	}
	double m0, e0, m1, e1, dt = 30;
	invariants(&s, x, &m0, &e0);
	step(&s, x, x0, dt); /* untimed: pages faulted in, caches warm */
	if (with_phases) phases(&s, x);
	double fastest = 1e30, t0 = now();
	for (int k = 0; k < steps; k++) {
		double t = now();
		step(&s, x, x0, dt);
		double el = now() - t;
		if (el < fastest) fastest = el;
	}
	double sec = now() - t0;
	invariants(&s, x, &m1, &e1);
	if (!isfinite(e1)) {
		fprintf(stderr, "hexstep: the state blew up\n");
		return 1;
	}
	printf("{\"n\":%d,\"cells\":%d,\"steps\":%d,\"seconds\":%.6f,\"cell_steps_per_second\":%.6g,"
	       "\"fastest_cell_steps_per_second\":%.6g,\"mass_drift\":%.3g,\"energy_drift\":%.3g}\n",
	       n, m->nc, steps, sec, (double)m->nc * steps / sec, m->nc / fastest, (m1 - m0) / m0, (e1 - e0) / e0);
	return 0;
}
