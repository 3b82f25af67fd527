/* muscl: an example outside solver for fvsweep.
 *
 * 2-D Euler (ideal gas) or Burgers, dimension-split with Strang splitting
 * X(dt/2) Y(dt) X(dt/2) (Strang 1968). Each 1-D sweep is MUSCL-Hancock in
 * primitive variables (Toro 2009, section 14.4) with a minmod or van Leer
 * slope limiter and the HLL flux (Harten, Lax and van Leer 1983) with the
 * wave-speed estimates of Davis (1988). Second order on smooth solutions.
 *
 * Usage: muscl JOB.json INPUT.csv OUTPUT.csv CFL LIMITER
 * It reads the grid, domain, boundaries, gamma and t_end from the job file
 * (fvsweep's JSON, see docs/own-solver.md), the initial cell averages from
 * INPUT (header x,y,rho,u,v,p or x,y,u), and writes the final averages to
 * OUTPUT in the same form.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

enum { PERIODIC, TRANSMISSIVE, REFLECTIVE };

static int nx, ny, nv, euler, vanleer;
static double x0, x1_, y0_, y1_, gam, tend, cfl;
static int bc[4]; /* west east south north */
static double *U[4]; /* conserved, (nx+4)*(ny+4), 2 ghost layers */

static void die(const char *msg) { fprintf(stderr, "muscl: %s\n", msg); exit(2); }

/* top-level value of key in fvsweep's indented job file ("\n  \"key\": ") */
static const char *field(const char *json, const char *key) {
	char pat[64];
	snprintf(pat, sizeof pat, "\n  \"%s\": ", key);
	const char *p = strstr(json, pat);
	if (!p) {
		snprintf(pat, sizeof pat, "\"%s\": ", key); /* nested keys (boundary) */
		p = strstr(json, pat);
		if (!p) { fprintf(stderr, "muscl: job file lacks %s\n", key); exit(2); }
		return p + strlen(pat);
	}
	return p + strlen(pat);
}
static double num(const char *json, const char *key) { return strtod(field(json, key), NULL); }
static int side(const char *json, const char *key) {
	const char *p = field(json, key);
	if (!strncmp(p, "\"periodic\"", 10)) return PERIODIC;
	if (!strncmp(p, "\"reflective\"", 12)) return REFLECTIVE;
	return TRANSMISSIVE;
}

static char *slurp(const char *path) {
	FILE *f = fopen(path, "rb");
	if (!f) die("cannot open the job file");
	fseek(f, 0, SEEK_END);
	long n = ftell(f);
	rewind(f);
	char *b = malloc(n + 1);
	if (fread(b, 1, n, f) != (size_t)n) die("cannot read the job file");
	b[n] = 0;
	fclose(f);
	return b;
}

#define IDX(i, j) (((j) + 2) * (nx + 4) + (i) + 2)

static double minmod(double a, double b) {
	if (a * b <= 0) return 0;
	return fabs(a) < fabs(b) ? a : b;
}
static double vanleer_(double a, double b) { return a * b <= 0 ? 0 : 2 * a * b / (a + b); }
static double slope(double a, double b) { return vanleer ? vanleer_(a, b) : minmod(a, b); }

/* Euler flux along the normal of conserved state q (rho, mn, mt, E). */
static void flux(const double *q, double *f, double *p_out) {
	if (!euler) { f[0] = 0.5 * q[0] * q[0]; return; }
	double r = q[0], un = q[1] / r, ut = q[2] / r;
	double p = (gam - 1) * (q[3] - 0.5 * r * (un * un + ut * ut));
	f[0] = q[1]; f[1] = q[1] * un + p; f[2] = q[1] * ut; f[3] = (q[3] + p) * un;
	if (p_out) *p_out = p;
}

/* HLL flux between conserved states l and r; Davis wave speeds. */
static void hll(const double *l, const double *r, double *f) {
	double fl[4], fr[4], sl, sr;
	if (euler) {
		double pl, pr;
		flux(l, fl, &pl); flux(r, fr, &pr);
		double ul = l[1] / l[0], ur = r[1] / r[0];
		double al = sqrt(gam * pl / l[0]), ar = sqrt(gam * pr / r[0]);
		sl = fmin(ul - al, ur - ar); sr = fmax(ul + al, ur + ar);
	} else {
		flux(l, fl, NULL); flux(r, fr, NULL);
		sl = fmin(l[0], r[0]); sr = fmax(l[0], r[0]);
	}
	for (int k = 0; k < nv; k++) {
		if (sl >= 0) f[k] = fl[k];
		else if (sr <= 0) f[k] = fr[k];
		else f[k] = (sr * fl[k] - sl * fr[k] + sl * sr * (r[k] - l[k])) / (sr - sl);
	}
}

static void toprim(const double *q, double *w) {
	if (!euler) { w[0] = q[0]; return; }
	w[0] = q[0]; w[1] = q[1] / q[0]; w[2] = q[2] / q[0];
	w[3] = (gam - 1) * (q[3] - 0.5 * q[0] * (w[1] * w[1] + w[2] * w[2]));
}
static void tocons(const double *w, double *q) {
	if (!euler) { q[0] = w[0]; return; }
	q[0] = w[0]; q[1] = w[0] * w[1]; q[2] = w[0] * w[2];
	q[3] = w[3] / (gam - 1) + 0.5 * w[0] * (w[1] * w[1] + w[2] * w[2]);
}

/* One MUSCL-Hancock step of size dtdx on line q[k][0..n+3] (2 ghosts each side). */
static void line(double (*q)[4], int n, double dtdx, double (*wl)[4], double (*wr)[4], double (*fx)[4]) {
	for (int i = 1; i < n + 3; i++) {
		double w[4], wm[4], wp[4], a[4], b[4], fa[4], fb[4];
		toprim(q[i], w); toprim(q[i - 1], wm); toprim(q[i + 1], wp);
		for (int k = 0; k < nv; k++) {
			double d = slope(w[k] - wm[k], wp[k] - w[k]);
			a[k] = w[k] - 0.5 * d; b[k] = w[k] + 0.5 * d;
		}
		double ua[4], ub[4];
		tocons(a, ua); tocons(b, ub);
		flux(ua, fa, NULL); flux(ub, fb, NULL);
		for (int k = 0; k < nv; k++) { /* half-step evolution of both boundary values */
			double c = 0.5 * dtdx * (fa[k] - fb[k]);
			wl[i][k] = ua[k] + c; wr[i][k] = ub[k] + c;
		}
	}
	for (int i = 1; i < n + 2; i++) hll(wr[i], wl[i + 1], fx[i]); /* face i+1/2 */
	for (int i = 2; i < n + 2; i++)
		for (int k = 0; k < nv; k++) q[i][k] -= dtdx * (fx[i][k] - fx[i - 1][k]);
}

static void ghosts(double (*q)[4], int n, int lo, int hi) {
	for (int g = 0; g < 2; g++)
		for (int k = 0; k < nv; k++) {
			q[1 - g][k] = lo == PERIODIC ? q[n + 1 - g][k] : q[2 + g][k];
			q[n + 2 + g][k] = hi == PERIODIC ? q[2 + g][k] : q[n + 1 - g][k];
		}
	if (euler) for (int g = 0; g < 2; g++) {
		if (lo == REFLECTIVE) q[1 - g][1] = -q[1 - g][1];
		if (hi == REFLECTIVE) q[n + 2 + g][1] = -q[n + 2 + g][1];
	}
}

static void sweep(int dir, double dt) {
	int n = dir == 0 ? nx : ny, m = dir == 0 ? ny : nx;
	double (*q)[4] = calloc(n + 4, sizeof *q), (*wl)[4] = calloc(n + 4, sizeof *wl);
	double (*wr)[4] = calloc(n + 4, sizeof *wr), (*fx)[4] = calloc(n + 4, sizeof *fx);
	int perm[4] = {0, 1, 2, 3};
	if (dir == 1) { perm[1] = 2; perm[2] = 1; } /* y sweep: normal momentum is my */
	for (int l = 0; l < m; l++) {
		for (int i = 0; i < n; i++) {
			int id = dir == 0 ? IDX(i, l) : IDX(l, i);
			for (int k = 0; k < nv; k++) q[i + 2][k] = U[perm[k]][id];
		}
		ghosts(q, n, bc[2 * dir], bc[2 * dir + 1]);
		line(q, n, dt / (dir == 0 ? (x1_ - x0) / nx : (y1_ - y0_) / ny), wl, wr, fx);
		for (int i = 0; i < n; i++) {
			int id = dir == 0 ? IDX(i, l) : IDX(l, i);
			for (int k = 0; k < nv; k++) U[perm[k]][id] = q[i + 2][k];
		}
	}
	free(q); free(wl); free(wr); free(fx);
}

static double maxdt(void) {
	double dx = (x1_ - x0) / nx, dy = (y1_ - y0_) / ny, s = 0;
	for (int j = 0; j < ny; j++)
		for (int i = 0; i < nx; i++) {
			double q[4], w[4];
			for (int k = 0; k < nv; k++) q[k] = U[k][IDX(i, j)];
			toprim(q, w);
			double sx, sy;
			if (euler) {
				if (!(w[0] > 0 && w[3] > 0)) { fprintf(stderr, "muscl: non-physical cell (%d,%d)\n", i, j); exit(3); }
				double a = sqrt(gam * w[3] / w[0]);
				sx = fabs(w[1]) + a; sy = fabs(w[2]) + a;
			} else sx = sy = fabs(w[0]);
			s = fmax(s, fmax(sx / dx, sy / dy));
		}
	return s > 0 ? cfl / s : tend;
}

int main(int argc, char **argv) {
	if (argc != 6) die("usage: muscl JOB INPUT OUTPUT CFL LIMITER");
	char *job = slurp(argv[1]);
	euler = !strncmp(field(job, "equation"), "\"euler\"", 7);
	nv = euler ? 4 : 1;
	nx = (int)num(job, "nx"); ny = (int)num(job, "ny");
	x0 = num(job, "x0"); x1_ = num(job, "x1"); y0_ = num(job, "y0"); y1_ = num(job, "y1");
	tend = num(job, "t_end");
	gam = euler ? num(job, "gamma") : 0;
	bc[0] = side(job, "west"); bc[1] = side(job, "east"); bc[2] = side(job, "south"); bc[3] = side(job, "north");
	cfl = atof(argv[4]);
	vanleer = !strcmp(argv[5], "vanleer");
	for (int k = 0; k < nv; k++) U[k] = calloc((size_t)(nx + 4) * (ny + 4), sizeof(double));

	FILE *in = fopen(argv[2], "r");
	if (!in) die("cannot open the input");
	char hdr[256];
	if (!fgets(hdr, sizeof hdr, in)) die("empty input");
	for (int j = 0; j < ny; j++)
		for (int i = 0; i < nx; i++) {
			double x, y, w[4], q[4];
			if (fscanf(in, "%lf,%lf", &x, &y) != 2) die("short input");
			for (int k = 0; k < nv; k++) if (fscanf(in, ",%lf", &w[k]) != 1) die("short input row");
			tocons(w, q);
			for (int k = 0; k < nv; k++) U[k][IDX(i, j)] = q[k];
		}
	fclose(in);

	double t = 0;
	while (t < tend) {
		double dt = maxdt();
		if (t + dt >= tend) dt = tend - t;
		sweep(0, 0.5 * dt); sweep(1, dt); sweep(0, 0.5 * dt);
		t += dt;
	}

	FILE *out = fopen(argv[3], "w");
	if (!out) die("cannot write the output");
	fprintf(out, euler ? "x,y,rho,u,v,p\n" : "x,y,u\n");
	double dx = (x1_ - x0) / nx, dy = (y1_ - y0_) / ny;
	for (int j = 0; j < ny; j++)
		for (int i = 0; i < nx; i++) {
			double q[4], w[4];
			for (int k = 0; k < nv; k++) q[k] = U[k][IDX(i, j)];
			toprim(q, w);
			fprintf(out, "%.17g,%.17g", x0 + (i + 0.5) * dx, y0_ + (j + 0.5) * dy);
			for (int k = 0; k < nv; k++) fprintf(out, ",%.17g", w[k]);
			fputc('\n', out);
		}
	return fclose(out) == 0 ? 0 : 4;
}
