/*
 * null_collision.c -- a plain C reference of the null-collision loop, for the Reid ramp model gas.
 *
 * Purpose: a yardstick for the speed of avalanche's numba kernel (benchmarks/run.py compiles and runs it with
 * `gcc -O2 ... -lm`), and an independent check that both simulate the same physics (tests/test_benchmarks.py).
 *
 * Model gas (Reid I D 1979, Aust. J. Phys. 32 231):
 *   elastic (momentum transfer)  sigma_m  = 6 A^2 at every energy,
 *   inelastic                    sigma_in = 10 (eps - 0.2) A^2 above the threshold 0.2 eV (energy loss 0.2 eV),
 *   gas molecule mass M = 4 amu, gas at 0 K (molecules at rest).
 *
 * Method (Skullerud 1968, J. Phys. D 1 1567, null-collision method):
 *   - constant trial frequency nu* = max over the energy grid [0, eps_max] of N (sigma_m + sigma_in)(eps) v(eps);
 *   - free flight times exponential with rate nu*; exact ballistic motion in the uniform field between events;
 *   - at each trial event the cumulative collision frequencies of the processes are read from a fine uniform grid
 *     (cell index = (int)(eps / d_eps), linear interpolation inside the cell: no search), and one uniform number
 *     r in [0, nu*) picks elastic, inelastic, or a null event (rejected: the electron flies on unchanged);
 *   - elastic: exact two-body kinematics with the target at rest, isotropic in the centre-of-mass frame (the
 *     recoil loss then averages 2 m M / (m + M)^2 of the energy, as sigma_m requires);
 *   - inelastic: the threshold energy is lost, the new direction is isotropic (common practice for this model).
 *   The acceleration e E / m points along +z, so the drift velocity comes out positive (field along -z).
 *
 * Estimates: the trial events are Poisson in time (constant nu*), so averages of the pre-collision state over
 * them are time averages: the mean energy and the flux drift velocity <v_z>. A single electron in a gas without
 * ionization or attachment is ergodic, so each electron's time average after relaxation estimates the swarm's
 * steady state; the standard errors come from the spread over independent electrons. The bulk drift velocity
 * (displacement / time, which equals the flux value here) is printed too.
 *
 * Usage:  null_collision [key=value ...]    keys and defaults:
 *   reduced_field_Td=12  number_density_m3=1e25  trial_events=1e8  electrons=100  seed=1
 *   energy_max_eV=2  grid_cells=20000  relaxation_fraction=0.1
 * Output: one "name value" pair per line (read by benchmarks/run.py and tests/test_benchmarks.py).
 * Exit status 2 on a bad argument.
 */

#define _POSIX_C_SOURCE 199309L
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

/* CODATA 2018 exact / recommended values (the same ones scipy.constants gives). */
#define ELEMENTARY_CHARGE_C 1.602176634e-19
#define ELECTRON_MASS_kg 9.1093837015e-31
#define ATOMIC_MASS_UNIT_kg 1.66053906660e-27
#define TOWNSEND_V_m2 1e-21
#define ANGSTROM2_m2 1e-20
#define TWO_PI 6.283185307179586

/* Reid ramp model (Reid 1979, Aust. J. Phys. 32 231). */
#define REID_ELASTIC_A2 6.0
#define REID_RAMP_A2_PER_eV 10.0
#define REID_THRESHOLD_eV 0.2
#define REID_MASS_amu 4.0

/* ------------------------------------------------------------------ xoshiro256** (Blackman & Vigna 2018) */

typedef struct {
    uint64_t s[4];
} rng_state;

static inline uint64_t rotl(const uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

static inline uint64_t rng_next(rng_state *r)
{
    uint64_t *s = r->s;
    const uint64_t result = rotl(s[1] * 5, 7) * 9;
    const uint64_t t = s[1] << 17;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rotl(s[3], 45);
    return result;
}

/* Uniform double in [0, 1) from the top 53 bits. */
static inline double rng_uniform(rng_state *r) { return (double)(rng_next(r) >> 11) * 0x1.0p-53; }

/* splitmix64 (Steele, Lea & Flood 2014) turns one 64-bit seed into a well-mixed xoshiro state. */
static uint64_t splitmix64(uint64_t *x)
{
    uint64_t z = (*x += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
}

static void rng_seed(rng_state *r, uint64_t seed)
{
    for (int i = 0; i < 4; i++)
        r->s[i] = splitmix64(&seed);
}

/* Isotropic unit vector: cos(theta) uniform in [-1, 1], phi uniform in [0, 2 pi). */
static inline void isotropic(rng_state *r, double *nx, double *ny, double *nz)
{
    const double c = 1.0 - 2.0 * rng_uniform(r);
    const double s = sqrt(fmax(0.0, 1.0 - c * c));
    const double phi = TWO_PI * rng_uniform(r);
    *nx = s * cos(phi);
    *ny = s * sin(phi);
    *nz = c;
}

/* ------------------------------------------------------------------------------------------ settings */

typedef struct {
    double reduced_field_Td, number_density_m3, trial_events, electrons, seed;
    double energy_max_eV, grid_cells, relaxation_fraction;
} settings;

static int parse_settings(int argc, char **argv, settings *p)
{
    struct {
        const char *name;
        double *value;
    } keys[] = {
        {"reduced_field_Td", &p->reduced_field_Td}, {"number_density_m3", &p->number_density_m3},
        {"trial_events", &p->trial_events},         {"electrons", &p->electrons},
        {"seed", &p->seed},                         {"energy_max_eV", &p->energy_max_eV},
        {"grid_cells", &p->grid_cells},             {"relaxation_fraction", &p->relaxation_fraction},
    };
    const int nkeys = (int)(sizeof keys / sizeof keys[0]);
    for (int a = 1; a < argc; a++) {
        const char *eq = strchr(argv[a], '=');
        int found = 0;
        for (int k = 0; eq && k < nkeys; k++) {
            if (strlen(keys[k].name) == (size_t)(eq - argv[a]) && strncmp(argv[a], keys[k].name, eq - argv[a]) == 0) {
                char *end;
                *keys[k].value = strtod(eq + 1, &end);
                if (end == eq + 1 || *end != '\0' || !isfinite(*keys[k].value)) {
                    fprintf(stderr, "null_collision: argument '%s': value is not a number\n", argv[a]);
                    return 0;
                }
                found = 1;
            }
        }
        if (!found) {
            fprintf(stderr, "null_collision: unknown argument '%s'; give key=value with key one of:", argv[a]);
            for (int k = 0; k < nkeys; k++)
                fprintf(stderr, " %s", keys[k].name);
            fprintf(stderr, "\n");
            return 0;
        }
    }
    if (p->reduced_field_Td <= 0 || p->number_density_m3 <= 0 || p->trial_events < 1 || p->electrons < 2 ||
        p->energy_max_eV <= REID_THRESHOLD_eV || p->grid_cells < 10 || p->relaxation_fraction < 0 ||
        p->relaxation_fraction >= 1 || p->seed < 0) {
        fprintf(stderr, "null_collision: need reduced_field_Td > 0, number_density_m3 > 0, trial_events >= 1, "
                        "electrons >= 2, energy_max_eV > %g, grid_cells >= 10, 0 <= relaxation_fraction < 1, "
                        "seed >= 0\n", REID_THRESHOLD_eV);
        return 0;
    }
    return 1;
}

static double cpu_seconds(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* ---------------------------------------------------------------------------------------------- main */

int main(int argc, char **argv)
{
    settings p = {12.0, 1e25, 1e8, 100, 1, 2.0, 20000, 0.1};
    if (!parse_settings(argc, argv, &p))
        return 2;

    const double m = ELECTRON_MASS_kg, e = ELEMENTARY_CHARGE_C;
    const double M = REID_MASS_amu * ATOMIC_MASS_UNIT_kg;
    const double N = p.number_density_m3;
    const double accel = e * p.reduced_field_Td * TOWNSEND_V_m2 * N / m; /* [m s^-2], along +z */
    const double energy_per_v2 = 0.5 * m / e;                            /* eps [eV] = this * v^2 */
    const double cm_electron = m / (m + M), cm_target = M / (m + M);

    /* Collision-frequency tables at the grid nodes eps_i = i d_eps, two per node (interleaved for locality):
     * cumulative [elastic, elastic + inelastic]. The threshold falls on a node when 0.2 / d_eps is an integer. */
    const long ncell = (long)p.grid_cells;
    const double d_eps = p.energy_max_eV / (double)ncell, inv_d_eps = 1.0 / d_eps;
    double *table = malloc(sizeof(double) * 2 * (size_t)(ncell + 1));
    if (!table) {
        fprintf(stderr, "null_collision: out of memory for %ld grid cells\n", ncell);
        return 2;
    }
    double trial_frequency = 0.0;
    for (long i = 0; i <= ncell; i++) {
        const double eps = (double)i * d_eps;
        const double v = sqrt(eps / energy_per_v2);
        const double sigma_el = REID_ELASTIC_A2 * ANGSTROM2_m2;
        const double sigma_in = eps > REID_THRESHOLD_eV ? REID_RAMP_A2_PER_eV * (eps - REID_THRESHOLD_eV) * ANGSTROM2_m2
                                                        : 0.0;
        table[2 * i] = N * sigma_el * v;
        table[2 * i + 1] = N * (sigma_el + sigma_in) * v;
        trial_frequency = fmax(trial_frequency, table[2 * i + 1]);
    }
    const double inv_trial_frequency = 1.0 / trial_frequency;

    const long n_electrons = (long)p.electrons;
    const long events_each = (long)(p.trial_events / (double)n_electrons);
    const long relax_events = (long)(p.relaxation_fraction * (double)events_each);
    const long tallied_each = events_each - relax_events;
    if (tallied_each < 1) {
        fprintf(stderr, "null_collision: trial_events / electrons leaves no event to tally after relaxation\n");
        return 2;
    }

    double sum_energy = 0, sum_energy2 = 0, sum_vz = 0, sum_vz2 = 0, sum_bulk = 0, sum_bulk2 = 0;
    long n_elastic = 0, n_inelastic = 0, beyond_grid = 0, below_threshold = 0;
    rng_state rng;
    rng_seed(&rng, (uint64_t)p.seed);

    const double t0 = cpu_seconds();
    for (long k = 0; k < n_electrons; k++) {
        /* Start at 0.1 eV in a random direction; the first relax_events trial events are not tallied. */
        double nx, ny, nz;
        isotropic(&rng, &nx, &ny, &nz);
        const double v0 = sqrt(0.1 / energy_per_v2);
        double vx = v0 * nx, vy = v0 * ny, vz = v0 * nz, x = 0, y = 0, z = 0, t = 0;
        double z_start = 0, t_start = 0, e_acc = 0, vz_acc = 0;
        for (long n = 0; n < events_each; n++) {
            if (n == relax_events) {
                z_start = z;
                t_start = t;
            }
            /* Free flight: exponential time with rate nu*, exact motion in the uniform field. */
            const double dt = -log(1.0 - rng_uniform(&rng)) * inv_trial_frequency;
            x += vx * dt;
            y += vy * dt;
            z += (vz + 0.5 * accel * dt) * dt;
            vz += accel * dt;
            t += dt;
            const double v2 = vx * vx + vy * vy + vz * vz;
            const double eps = energy_per_v2 * v2;
            if (n >= relax_events) {
                e_acc += eps;
                vz_acc += vz;
            }
            /* Table lookup: cell index and linear interpolation. */
            const double u = eps * inv_d_eps;
            long i = (long)u;
            double f = u - (double)i;
            if (i >= ncell) {
                beyond_grid++; /* nu* might not bound here: counted, reported, must stay 0 */
                i = ncell - 1;
                f = 1.0;
            }
            const double *cell = table + 2 * i;
            const double r = rng_uniform(&rng) * trial_frequency;
            const double nu_total = cell[1] + f * (cell[3] - cell[1]);
            if (r >= nu_total)
                continue; /* null event */
            const double nu_elastic = cell[0] + f * (cell[2] - cell[0]);
            isotropic(&rng, &nx, &ny, &nz);
            if (r < nu_elastic) {
                /* Two-body elastic collision, target at rest: v' = V_cm + M/(m+M) |v| n (n isotropic in CM). */
                const double g = sqrt(v2);
                vx = cm_electron * vx + cm_target * g * nx;
                vy = cm_electron * vy + cm_target * g * ny;
                vz = cm_electron * vz + cm_target * g * nz;
                n_elastic++;
            } else {
                const double eps_after = eps - REID_THRESHOLD_eV;
                if (eps_after < 0.0) {
                    below_threshold++; /* interpolation round-off at the threshold cell: treated as null */
                    continue;
                }
                const double speed = sqrt(eps_after / energy_per_v2);
                vx = speed * nx;
                vy = speed * ny;
                vz = speed * nz;
                n_inelastic++;
            }
        }
        const double mean_e = e_acc / (double)tallied_each, mean_vz = vz_acc / (double)tallied_each;
        const double bulk = (z - z_start) / (t - t_start);
        sum_energy += mean_e;
        sum_energy2 += mean_e * mean_e;
        sum_vz += mean_vz;
        sum_vz2 += mean_vz * mean_vz;
        sum_bulk += bulk;
        sum_bulk2 += bulk * bulk;
    }
    const double seconds = cpu_seconds() - t0;
    free(table);

    const double ne = (double)n_electrons;
    const double events = (double)events_each * ne;
#define MEAN_STDERR(s, s2) (s) / ne, sqrt(fmax(0.0, ((s2) / ne - ((s) / ne) * ((s) / ne)) / (ne - 1.0)))
    printf("reduced_field_Td %.17g\n", p.reduced_field_Td);
    printf("number_density_m3 %.17g\n", N);
    printf("energy_max_eV %.17g\n", p.energy_max_eV);
    printf("trial_frequency_s %.17g\n", trial_frequency);
    printf("electrons %ld\n", n_electrons);
    printf("trial_events %.0f\n", events);
    printf("real_collisions %ld\n", n_elastic + n_inelastic);
    printf("elastic_collisions %ld\n", n_elastic);
    printf("inelastic_collisions %ld\n", n_inelastic);
    printf("beyond_grid %ld\n", beyond_grid);
    printf("below_threshold %ld\n", below_threshold);
    printf("cpu_seconds %.6g\n", seconds);
    printf("events_per_second %.6g\n", events / seconds);
    printf("mean_energy_eV %.10g %.3g\n", MEAN_STDERR(sum_energy, sum_energy2));
    printf("drift_velocity_flux %.10g %.3g\n", MEAN_STDERR(sum_vz, sum_vz2));
    printf("drift_velocity_bulk %.10g %.3g\n", MEAN_STDERR(sum_bulk, sum_bulk2));
    return 0;
}
