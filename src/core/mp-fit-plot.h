/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-fit-plot.h: the Fowler plot of a fit, drawn with cairo.
 *
 * Top: Y/(kT)^2 = qe / (A (kT)^2) of every QE point against
 * x = (E - phi_eff)/kT, on Fowler's universal curve F_1(x) (Fowler 1931,
 * Phys. Rev. 38, 45), one marker per temperature block, with dashed
 * curves of the model with the laser's line width per block. Bottom: the
 * normalised residuals of the QE and MTE points against x. */
#pragma once

#include <cairo.h>

#include "mp-fit.h"
#include "mp-plot-axes.h"

G_BEGIN_DECLS

void mp_fit_plot_draw (cairo_t *cr, const MpFitResult *fit, const MpPlotInk *ink,
                       double width, double height);

/* Fowler coordinates of one QE residual: x and Y/(kT)^2 (measured). */
void mp_fit_plot_fowler_point (const MpFitResult *fit, const MpFitResidual *r,
                               double *x, double *reduced_yield);

G_END_DECLS
