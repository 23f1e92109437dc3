/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-constants.h: physical constants, CODATA 2018 (exact SI values where
 * the 2019 SI fixes them; unchanged in CODATA 2022), and derived figures. */
#pragma once

/* Planck constant times speed of light, eV nm (CODATA 2018, exact). */
#define MP_HC_EV_NM 1239.8419843320025
/* Boltzmann constant, eV/K (CODATA 2018, exact). */
#define MP_K_B_EV_PER_K 8.617333262145179e-5
/* Elementary charge, C (CODATA 2018, exact). */
#define MP_E_CHARGE_C 1.602176634e-19
/* Vacuum electric permittivity, F/m (CODATA 2018). */
#define MP_EPSILON0_F_PER_M 8.8541878128e-12

/* Liquid cryogens at their normal boiling points, latent heat only
 * (University of Wisconsin cryogen data table, as quoted in the spec). */
#define MP_HELIUM_DENSITY_KG_PER_M3 125.1
#define MP_HELIUM_LATENT_J_PER_G 20.75
#define MP_NITROGEN_DENSITY_KG_PER_M3 806.5
#define MP_NITROGEN_LATENT_J_PER_G 198.8
