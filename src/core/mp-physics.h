/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-physics.h: the Fowler-DuBridge threshold model and the counting
 * statistics of ../shared/spec/physics.md. All functions are pure and
 * thread-safe once mp_core_init() has run. */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

void mp_core_init (void);

double mp_photon_energy_eV_from_wavelength_nm (double wavelength_nm);
double mp_wavelength_nm_from_photon_energy_eV (double photon_energy_eV);
double mp_thermal_energy_eV (double temperature_K);

/* Schottky lowering of the work function for an extraction field. */
double mp_schottky_lowering_eV (double field_MV_per_m);
double mp_effective_work_function_eV (double work_function_eV,
                                      double field_MV_per_m);

/* Complete Fermi-Dirac integral F_j(x), j = 0..3, GSL normalisation.
 * Never aborts; underflows to 0 only where the true value does. */
double mp_fermi_dirac (int j, double x);
/* ln F_j(x), finite for every finite x. */
double mp_log_fermi_dirac (int j, double x);

/* Emission at one photon energy: the yield shape and transverse-energy
 * moments of the emitted electrons. */
typedef struct
{
  double log_yield;      /* ln(Y / eV^2), always finite */
  double mte_eV;         /* <eps> */
  double eps2_eV2;       /* <eps^2> */
} MpEmission;

void mp_emission_monochromatic (double excess_eV,
                                double temperature_K,
                                MpEmission *out);
/* Averaged over a Gaussian laser line of rms width bandwidth_eV
 * (Gauss-Hermite quadrature); bandwidth_eV = 0 gives the monochromatic
 * result. */
void mp_emission_averaged (double excess_eV,
                           double temperature_K,
                           double bandwidth_eV,
                           MpEmission *out);

/* The quadrature over the Gaussian laser line that mp_emission_averaged
 * uses (its rule depends on the line width against kT): the excess energy
 * of each node and the natural log of its weight (the weights sum to 1 to
 * within the line's cut-off). Fills at most MP_LINE_NODES of each; returns
 * the count. Samplers draw from the same nodes so that they match. */
#define MP_LINE_NODES 448
int mp_line_quadrature (double excess_eV,
                        double temperature_K,
                        double bandwidth_eV,
                        double *node_excess_eV,
                        double *log_weight);

double mp_yield_eV2 (const MpEmission *em);

/* QE(E, T) = QE_ref * <Y>(E, T) / <Y>(E_ref, T_ref). */
double mp_qe_from_reference (double qe_ref,
                             const MpEmission *at_ref,
                             const MpEmission *at_step);

/* Counting statistics (physics.md, "Counting and dwell time"). */
double mp_per_electron_variance_eV2 (const MpEmission *em,
                                     double resolution_eV);
double mp_background_weight_eV2 (double acceptance_eV, double mte_eV);
/* V + (B/S) W_b, the variance per detected signal electron. */
double mp_variance_per_electron_eV2 (const MpEmission *em,
                                     double resolution_eV,
                                     double signal_rate_per_s,
                                     double background_rate_per_s,
                                     double acceptance_eV);
double mp_statistical_sigma_eV (double variance_per_electron_eV2,
                                double signal_rate_per_s,
                                double dwell_s);
/* Dwell for a statistical share sigma_target^2 - sigma_sys^2; returns
 * INFINITY when that share is not positive or there is no signal. */
double mp_required_dwell_s (double variance_per_electron_eV2,
                            double signal_rate_per_s,
                            double target_sigma_eV,
                            double systematic_eV);
/* Total uncertainty reached after a dwell: sqrt(stat^2 + sys^2). */
double mp_reached_sigma_eV (double variance_per_electron_eV2,
                            double signal_rate_per_s,
                            double dwell_s,
                            double systematic_eV);

/* Litres of liquid boiled per hour by one watt of heat. */
double mp_helium_boiloff_L_per_h_per_W (void);
double mp_nitrogen_boiloff_L_per_h_per_W (void);

G_END_DECLS
