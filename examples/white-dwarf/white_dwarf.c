/*
 * white_dwarf.c — the mass–radius relation of cold carbon–oxygen white dwarfs, integrated in C with
 * the equation of state from the Fermiwell API (through the C client in ../c).
 *
 * What it does
 *   1. For each model, ONE binary request: the pressure P and χρ = dlnP/dlnρ|T of C/O matter
 *      (mixture c12-o16: X(C12) = X(O16) = 0.5, so Ye = 1/2 and μe = 2) at T = 1e3 K — the lowest
 *      temperature of the API's domain, our stand-in for T → 0 — on a grid of 40 densities per
 *      decade from 1e-4 to 1e12 g/cm³ (641 points). Tabulating once and integrating in the client
 *      is the fair use of a metered API: 641 points per model instead of a request per RK4 stage.
 *   2. ln ρ as a function of ln P between the nodes: cubic Hermite interpolation with the exact
 *      slopes dlnρ/dlnP = 1/χρ from the API (Fritsch & Carlson 1980, SIAM J. Numer. Anal. 17, 238
 *      for piecewise cubic Hermite interpolation). Only the dense part where P > 0 and χρ > 0 is used
 *      (with Coulomb corrections cold matter has a zero-pressure density near 20 g/cm³, below which
 *      the pressure is negative: there the star's surface is).
 *   3. Hydrostatic equilibrium, dP/dr = −G m ρ/r², dm/dr = 4π r² ρ (Newtonian; e.g. Chandrasekhar
 *      1939, "An Introduction to the Study of Stellar Structure", ch. XI), integrated with classical
 *      fourth-order Runge–Kutta (Kutta 1901, Z. Math. Phys. 46, 435; e.g. Press et al., "Numerical
 *      Recipes", 3rd ed. 2007, §17.1) in the variable s = sqrt(ln(Pc/P)), in which r and m are smooth at
 *      the centre (r ∝ s there), from a series start at s = 1e-3 out to the surface pressure
 *      max(1e-12 Pc, lowest tabulated P), in 4000 equal steps.
 *   4. Two models: "ideal" = electrons, positrons, ions, photons (Coulomb corrections OFF; at 1e3 K
 *      the ions' thermal pressure is 9e-5 of the electrons' at 1e2 g/cm³ and falls as ρ^(−2/3),
 *      photons add nothing, so this is Chandrasekhar's degenerate electron gas), and "coulomb" = all five components (ON).
 *   5. Central densities 1e5 … 1e11 g/cm³ (the range asked for), plus 1e2 … 1e5 below it: the
 *      non-relativistic branch R ∝ M^(−1/3) only holds where p_F ≪ m_e c at the centre
 *      (x_c ≈ 0.37 already at 1e5 g/cm³, 0.08 at 1e3), so the slope is checked there.
 *
 * Checks printed (and asserted by tests/examples): the largest mass with Coulomb off against
 * Chandrasekhar's limiting mass 5.836/μe² M☉ (Chandrasekhar 1939); the Coulomb-on maximum is
 * lower; the low-density branch against the n = 3/2 polytrope with Chandrasekhar's non-relativistic
 * constant K1 = (3/π)^(2/3) h²/(20 m_e (μe m_u)^(5/3)).
 *
 * Constants: CODATA 2018 (the set the API states in meta.constantsSet); masses in units of the
 * nominal solar mass parameter (GM)☉ = 1.3271244e26 cm³ s⁻² (IAU 2015 Resolution B3), i.e.
 * M/M☉ = G m/(GM)☉, M☉ = 1.98841e33 g with G below.
 *
 * Build: make -C examples/white-dwarf      Run: FERMIWELL_URL=… FERMIWELL_KEY=fwk_… ./white_dwarf
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "fermiwell.h"

/* CODATA 2018 (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010); h exact in the 2019 SI. */
static const double G_NEWTON = 6.67430e-8;         /* cm³ g⁻¹ s⁻² */
static const double PLANCK_H = 6.62607015e-27;     /* erg s */
static const double LIGHT_C = 2.99792458e10;       /* cm s⁻¹ */
static const double ELECTRON_MASS = 9.1093837015e-28; /* g */
static const double ATOMIC_MASS_UNIT = 1.66053906660e-24; /* g */
/* IAU 2015 Resolution B3, nominal solar mass parameter. */
static const double GM_SUN = 1.3271244e26; /* cm³ s⁻² */

static const double MU_E = 2.0;             /* C/O: Ye = 1/2 */
static const double CHANDRASEKHAR_1939 = 5.836; /* M_Ch = 5.836/μe² M☉ (Chandrasekhar 1939) */
static const double TEMPERATURE = 1.0e3;    /* K: the lowest temperature of the API's domain */

#define LOG_RHO_MIN (-4.0)
#define LOG_RHO_MAX 12.0
#define PER_DECADE 40
#define STEPS 4000

typedef struct {
  const char *name;
  const char *components;
  int n;             /* nodes used */
  double *lnp, *lnrho, *slope; /* slope = dlnρ/dlnP = 1/χρ */
} eos_table;

/* ln ρ at ln P: cubic Hermite on the node interval (Fritsch & Carlson 1980). */
static double table_lnrho(const eos_table *t, double lnp) {
  if (lnp <= t->lnp[0]) return t->lnrho[0];
  int a = 0, b = t->n - 1;
  if (lnp >= t->lnp[b]) return t->lnrho[b];
  while (b - a > 1) {
    int mid = (a + b) / 2;
    if (t->lnp[mid] <= lnp) a = mid; else b = mid;
  }
  double h = t->lnp[b] - t->lnp[a], u = (lnp - t->lnp[a]) / h;
  double h00 = (1 + 2 * u) * (1 - u) * (1 - u), h10 = u * (1 - u) * (1 - u);
  double h01 = u * u * (3 - 2 * u), h11 = u * u * (u - 1);
  return h00 * t->lnrho[a] + h10 * h * t->slope[a] + h01 * t->lnrho[b] + h11 * h * t->slope[b];
}

/* ln P at ln ρ, by bisection of the (monotone) interpolant. */
static double table_lnp(const eos_table *t, double lnrho) {
  double lo = t->lnp[0], hi = t->lnp[t->n - 1];
  for (int k = 0; k < 200 && hi - lo > 1e-15 * fabs(hi); k++) {
    double mid = 0.5 * (lo + hi);
    if (table_lnrho(t, mid) < lnrho) lo = mid; else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/* One request: P and χρ on the density grid; keeps the dense part where P > 0 and χρ > 0. */
static int load_table(fw_client *client, eos_table *t) {
  const int n = (int)lround((LOG_RHO_MAX - LOG_RHO_MIN) * PER_DECADE) + 1;
  double *rho = malloc(n * sizeof *rho), *temp = malloc(n * sizeof *temp), *out = malloc(2 * n * sizeof *out);
  int *status = malloc(n * sizeof *status);
  t->lnp = malloc(n * sizeof *t->lnp);
  t->lnrho = malloc(n * sizeof *t->lnrho);
  t->slope = malloc(n * sizeof *t->slope);
  if (!rho || !temp || !out || !status || !t->lnp || !t->lnrho || !t->slope) return 0;
  for (int i = 0; i < n; i++) {
    rho[i] = pow(10.0, LOG_RHO_MIN + (double)i / PER_DECADE);
    temp[i] = TEMPERATURE;
  }
  char options[256];
  snprintf(options, sizeof options, "mixture=c12-o16&method=exact&components=%s", t->components);
  int rc = fw_evaluate(client, options, (size_t)n, rho, temp, "pressure,chiRho", out, status);
  if (rc != FW_OK) {
    fprintf(stderr, "white_dwarf: the EOS request for model %s failed: %s\n", t->name, fw_error_message(client));
    return 0;
  }
  for (int i = 0; i < n; i++) {
    if (status[i] != 0) {
      fprintf(stderr, "white_dwarf: point %d (density %g) has status %d %s\n", i, rho[i], status[i], fw_status_name(status[i]));
      return 0;
    }
  }
  const double *p = out, *chi = out + n;
  int lo = n - 1;
  while (lo > 0 && p[lo - 1] > 0 && chi[lo - 1] > 0) lo--;
  t->n = n - lo;
  for (int i = lo; i < n; i++) {
    t->lnp[i - lo] = log(p[i]);
    t->lnrho[i - lo] = log(rho[i]);
    t->slope[i - lo] = 1.0 / chi[i];
  }
  printf("# model %s: components %s, T = %.0e K, %d densities in one request, %d used (rho >= %.4g g/cm3, P > 0, chiRho > 0)\n",
         t->name, t->components, TEMPERATURE, n, t->n, rho[lo]);
  printf("# model %s meta: %s\n", t->name, fw_last_meta(client));
  free(rho); free(temp); free(out); free(status);
  return 1;
}

typedef struct { double mass, radius, surface_density; } star;

/* d(r, m)/ds with ln P = ln Pc − s². */
static void derivatives(const eos_table *t, double lnpc, double s, double r, double m, double *dr, double *dm) {
  double lnp = lnpc - s * s, p = exp(lnp), rho = exp(table_lnrho(t, lnp));
  *dr = 2 * s * p * r * r / (G_NEWTON * m * rho);
  *dm = 2 * s * 4 * M_PI * r * r * r * r * p / (G_NEWTON * m);
}

static star integrate(const eos_table *t, double rho_c) {
  double lnpc = table_lnp(t, log(rho_c)), pc = exp(lnpc);
  double lnps = fmax(lnpc + log(1e-12), t->lnp[0]);
  double s = 1e-3, s_end = sqrt(lnpc - lnps), h = (s_end - s) / STEPS;
  /* series start: P ≈ Pc − (2π/3) G ρc² r², m ≈ (4π/3) ρc r³ */
  double r = s * sqrt(3 * pc / (2 * M_PI * G_NEWTON * rho_c * rho_c));
  double m = 4 * M_PI / 3 * rho_c * r * r * r;
  for (int i = 0; i < STEPS; i++) {
    double r1, m1, r2, m2, r3, m3, r4, m4;
    derivatives(t, lnpc, s, r, m, &r1, &m1);
    derivatives(t, lnpc, s + h / 2, r + h / 2 * r1, m + h / 2 * m1, &r2, &m2);
    derivatives(t, lnpc, s + h / 2, r + h / 2 * r2, m + h / 2 * m2, &r3, &m3);
    derivatives(t, lnpc, s + h, r + h * r3, m + h * m3, &r4, &m4);
    r += h / 6 * (r1 + 2 * r2 + 2 * r3 + r4);
    m += h / 6 * (m1 + 2 * m2 + 2 * m3 + m4);
    s += h;
  }
  star out = {G_NEWTON * m / GM_SUN, r, exp(table_lnrho(t, lnps))};
  return out;
}

/*
 * Lane–Emden equation θ'' + (2/ξ)θ' + θⁿ = 0 (Chandrasekhar 1939, ch. IV) by RK4 from the series
 * θ = 1 − ξ²/6 + nξ⁴/120: the first zero ξ1 and ω = −ξ1² θ'(ξ1).
 */
static void lane_emden(double n, double *xi1, double *omega) {
  double h = 1e-5, x = 1e-3, th = 1 - x * x / 6 + n * pow(x, 4) / 120, dth = -x / 3 + n * pow(x, 3) / 30;
  for (;;) {
    double k1 = dth, l1 = -pow(fmax(th, 0), n) - 2 * dth / x;
    double k2 = dth + h / 2 * l1, l2 = -pow(fmax(th + h / 2 * k1, 0), n) - 2 * (dth + h / 2 * l1) / (x + h / 2);
    double k3 = dth + h / 2 * l2, l3 = -pow(fmax(th + h / 2 * k2, 0), n) - 2 * (dth + h / 2 * l2) / (x + h / 2);
    double k4 = dth + h * l3, l4 = -pow(fmax(th + h * k3, 0), n) - 2 * (dth + h * l3) / (x + h);
    double th_next = th + h / 6 * (k1 + 2 * k2 + 2 * k3 + k4), dth_next = dth + h / 6 * (l1 + 2 * l2 + 2 * l3 + l4);
    if (th_next <= 0) {
      double f = th / (th - th_next); /* the zero inside the last step, linearly */
      *xi1 = x + f * h;
      double d = dth + f * (dth_next - dth);
      *omega = -(*xi1) * (*xi1) * d;
      return;
    }
    th = th_next; dth = dth_next; x += h;
  }
}

int main(void) {
  fw_client *client = fw_open(NULL, NULL);
  if (!client) {
    fprintf(stderr, "set FERMIWELL_KEY to an API key (fwk_…) and FERMIWELL_URL to the gateway\n");
    return 1;
  }
  eos_table models[2] = {
    {"ideal", "electrons,positrons,ions,photons", 0, NULL, NULL, NULL},
    {"coulomb", "electrons,positrons,ions,photons,coulomb", 0, NULL, NULL, NULL},
  };
  printf("# Cold C/O white dwarfs (mu_e = 2) with the Fermiwell equation of state\n");
  for (int k = 0; k < 2; k++) {
    if (!load_table(client, &models[k])) { fw_close(client); return 2; }
  }
  fw_close(client);

  /* The n = 3/2 polytrope with Chandrasekhar's non-relativistic constant, and the n = 3 limit. */
  double xi15, om15, xi3, om3;
  lane_emden(1.5, &xi15, &om15);
  lane_emden(3.0, &xi3, &om3);
  const double k1 = pow(3 / M_PI, 2.0 / 3) * PLANCK_H * PLANCK_H / (20 * ELECTRON_MASS * pow(MU_E * ATOMIC_MASS_UNIT, 5.0 / 3));
  const double hbar_c = PLANCK_H / (2 * M_PI) * LIGHT_C;
  const double m_limit = sqrt(3 * M_PI) / 2 * om3 * pow(hbar_c / G_NEWTON, 1.5) / pow(MU_E * ATOMIC_MASS_UNIT, 2);
  printf("# Lane-Emden (own RK4): n=1.5 xi1=%.5f omega=%.5f; n=3 xi1=%.5f omega=%.5f\n", xi15, om15, xi3, om3);
  printf("# the same limit formula with CODATA 2018 and m_u: %.4f/mu_e^2 Msun = %.4f Msun (Chandrasekhar 1939: 5.836/mu_e^2 = %.4f)\n",
         G_NEWTON * m_limit / GM_SUN * MU_E * MU_E, G_NEWTON * m_limit / GM_SUN, CHANDRASEKHAR_1939 / (MU_E * MU_E));

  printf("# model log10_rho_c rho_c[g/cm3] mass[Msun] radius[km] surface_density[g/cm3] polytrope_mass[Msun] polytrope_radius[km] in_issue_range\n");
  double max_mass[2] = {0, 0}, rho_at_max[2] = {0, 0};
  for (int k = 0; k < 2; k++) {
    for (int j = 0; j <= 36; j++) { /* log10 ρc = 2 … 11 in steps of 0.25 */
      double lg = 2 + 0.25 * j, rho_c = pow(10, lg);
      star st = integrate(&models[k], rho_c);
      double a = sqrt(2.5 * k1 * pow(rho_c, 1 / 1.5 - 1) / (4 * M_PI * G_NEWTON));
      double poly_m = G_NEWTON * 4 * M_PI * a * a * a * rho_c * om15 / GM_SUN, poly_r = xi15 * a;
      int in_range = lg >= 5 - 1e-9;
      printf("star %s %.2f %.6e %.8f %.6f %.4g %.8f %.6f %s\n", models[k].name, lg, rho_c, st.mass, st.radius / 1e5,
             st.surface_density, poly_m, poly_r / 1e5, in_range ? "yes" : "below");
      if (in_range && st.mass > max_mass[k]) { max_mass[k] = st.mass; rho_at_max[k] = rho_c; }
    }
  }
  double chandra = CHANDRASEKHAR_1939 / (MU_E * MU_E);
  printf("summary ideal max_mass %.6f Msun at rho_c %.3e (Chandrasekhar 1939: %.4f, difference %+.3f %%)\n", max_mass[0],
         rho_at_max[0], chandra, 100 * (max_mass[0] / chandra - 1));
  printf("summary coulomb max_mass %.6f Msun at rho_c %.3e (%+.3f %% against Coulomb off)\n", max_mass[1], rho_at_max[1],
         100 * (max_mass[1] / max_mass[0] - 1));
  for (int k = 0; k < 2; k++) { free(models[k].lnp); free(models[k].lnrho); free(models[k].slope); }
  return 0;
}
