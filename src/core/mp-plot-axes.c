/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot-axes.c: axes with "nice" ticks, frames, markers and text. */
#include "config.h"

#include <math.h>

#include "mp-plot-axes.h"

#define MP_PLOT_FONT "DejaVu Sans"
#define TICK_LEN 4.0
#define GAP 3.0

void
mp_axis_init (MpAxis *axis, double min, double max, gboolean log)
{
  g_return_if_fail (axis != NULL);

  if (!isfinite (min) || !isfinite (max))
    {
      min = log ? 1 : 0;
      max = log ? 10 : 1;
    }
  if (min > max)
    {
      double t = min;
      min = max;
      max = t;
    }
  if (log && min <= 0)
    {
      min = max > 0 ? max / 1000 : 1;
      max = max > 0 ? max : 10;
    }
  if (min == max)
    {
      if (log)
        {
          min /= 2;
          max *= 2;
        }
      else
        {
          double d = min != 0 ? fabs (min) * 0.1 : 1;
          min -= d;
          max += d;
        }
    }
  axis->min = min;
  axis->max = max;
  axis->log = log;
  axis->pos0 = 0;
  axis->pos1 = 1;
}

gboolean
mp_axis_wants_log (double min, double max)
{
  return min > 0 && max > 0 && isfinite (min) && isfinite (max)
         && max / min >= MP_AXIS_LOG_RATIO;
}

static double
nice_step (double span, int max_ticks)
{
  double raw, mag, norm;

  if (max_ticks < 1)
    max_ticks = 1;
  raw = span / max_ticks;
  if (!(raw > 0) || !isfinite (raw))
    return 1;
  mag = pow (10, floor (log10 (raw)));
  norm = raw / mag;
  if (norm <= 1.0 + 1e-9)
    return mag;
  if (norm <= 2.0 + 1e-9)
    return 2 * mag;
  if (norm <= 5.0 + 1e-9)
    return 5 * mag;
  return 10 * mag;
}

/* Log axes over a few decades get ticks at 1, 2 and 5 x 10^n. */
#define FEW_DECADES 2.5

static gboolean
log_few_decades (const MpAxis *axis)
{
  return axis->log && log10 (axis->max / axis->min) <= FEW_DECADES + 1e-9;
}

static const double one_two_five[] = { 1, 2, 5 };

static double
snap_125 (double v, gboolean up)
{
  double n = floor (log10 (v) + 1e-9);
  double best = up ? INFINITY : -INFINITY;

  for (int d = -1; d <= 1; d++)
    for (int k = 0; k < 3; k++)
      {
        double c = one_two_five[k] * pow (10, n + d);
        if (up && c >= v * (1 - 1e-9) && c < best)
          best = c;
        if (!up && c <= v * (1 + 1e-9) && c > best)
          best = c;
      }
  return best;
}

static int
decade_stride (const MpAxis *axis, int max_ticks)
{
  double decades = log10 (axis->max) - log10 (axis->min);

  if (max_ticks < 1)
    max_ticks = 1;
  return MAX (1, (int) ceil (decades / max_ticks - 1e-9));
}

void
mp_axis_nice (MpAxis *axis, int max_ticks)
{
  g_return_if_fail (axis != NULL);

  if (axis->log)
    {
      if (log10 (axis->max / axis->min) <= FEW_DECADES)
        {
          axis->min = snap_125 (axis->min, FALSE);
          axis->max = snap_125 (axis->max, TRUE);
        }
      else
        {
          axis->min = pow (10, floor (log10 (axis->min) + 1e-9));
          axis->max = pow (10, ceil (log10 (axis->max) - 1e-9));
        }
      if (axis->max <= axis->min)
        axis->max = axis->min * 10;
    }
  else
    {
      double step = nice_step (axis->max - axis->min, max_ticks);

      axis->min = floor (axis->min / step + 1e-9) * step;
      axis->max = ceil (axis->max / step - 1e-9) * step;
      if (axis->max <= axis->min)
        axis->max = axis->min + step;
    }
}

void
mp_axis_set_position (MpAxis *axis, double pos0, double pos1)
{
  g_return_if_fail (axis != NULL);
  axis->pos0 = pos0;
  axis->pos1 = pos1;
}

static double
axis_fraction (const MpAxis *axis, double value)
{
  if (axis->log)
    {
      if (!(value > 0))
        return -1e3;
      return (log10 (value) - log10 (axis->min))
             / (log10 (axis->max) - log10 (axis->min));
    }
  return (value - axis->min) / (axis->max - axis->min);
}

double
mp_axis_map (const MpAxis *axis, double value)
{
  double f;

  g_return_val_if_fail (axis != NULL, 0);
  f = axis_fraction (axis, value);
  /* Keep far-off values drawable (cairo dislikes huge coordinates). */
  f = CLAMP (f, -1e3, 1e3);
  return axis->pos0 + f * (axis->pos1 - axis->pos0);
}

double
mp_axis_unmap (const MpAxis *axis, double pos)
{
  double f;

  g_return_val_if_fail (axis != NULL, 0);
  if (axis->pos1 == axis->pos0)
    return axis->min;
  f = (pos - axis->pos0) / (axis->pos1 - axis->pos0);
  if (axis->log)
    return pow (10, log10 (axis->min)
                    + f * (log10 (axis->max) - log10 (axis->min)));
  return axis->min + f * (axis->max - axis->min);
}

gboolean
mp_axis_contains (const MpAxis *axis, double value)
{
  double f = axis_fraction (axis, value);

  return f >= -1e-9 && f <= 1 + 1e-9;
}

GArray *
mp_axis_major_ticks (const MpAxis *axis, int max_ticks)
{
  GArray *ticks = g_array_new (FALSE, FALSE, sizeof (double));

  g_return_val_if_fail (axis != NULL, ticks);

  if (log_few_decades (axis))
    {
      int lo = (int) floor (log10 (axis->min)) - 1;
      int hi = (int) ceil (log10 (axis->max));

      for (int n = lo; n <= hi; n++)
        for (int k = 0; k < 3; k++)
          {
            double v = one_two_five[k] * pow (10, n);
            if (mp_axis_contains (axis, v))
              g_array_append_val (ticks, v);
          }
    }
  else if (axis->log)
    {
      int stride = decade_stride (axis, max_ticks);
      int lo = (int) ceil (log10 (axis->min) - 1e-9);
      int hi = (int) floor (log10 (axis->max) + 1e-9);

      /* Align the stride on multiples so that labels look regular. */
      for (int n = lo; n <= hi; n++)
        if (((n % stride) + stride) % stride == 0)
          {
            double v = pow (10, n);
            g_array_append_val (ticks, v);
          }
    }
  else
    {
      double step = nice_step (axis->max - axis->min, max_ticks);
      double first = ceil (axis->min / step - 1e-9);

      for (int i = 0; i < 200; i++)
        {
          double v = (first + i) * step;
          if (v > axis->max + step * 1e-9)
            break;
          if (fabs (v) < step * 1e-9)
            v = 0;
          g_array_append_val (ticks, v);
        }
    }
  return ticks;
}

GArray *
mp_axis_minor_ticks (const MpAxis *axis, int max_ticks)
{
  GArray *ticks = g_array_new (FALSE, FALSE, sizeof (double));

  g_return_val_if_fail (axis != NULL, ticks);

  if (log_few_decades (axis))
    {
      int lo = (int) floor (log10 (axis->min)) - 1;
      int hi = (int) ceil (log10 (axis->max));

      for (int n = lo; n <= hi; n++)
        for (int k = 3; k <= 9; k++)
          {
            double v = k * pow (10, n);
            if (k != 5 && mp_axis_contains (axis, v))
              g_array_append_val (ticks, v);
          }
    }
  else if (axis->log)
    {
      int stride = decade_stride (axis, max_ticks);
      int lo = (int) floor (log10 (axis->min));
      int hi = (int) ceil (log10 (axis->max));

      for (int n = lo; n <= hi; n++)
        {
          if (stride > 1)
            {
              double v = pow (10, n);
              if (((n % stride) + stride) % stride != 0
                  && mp_axis_contains (axis, v))
                g_array_append_val (ticks, v);
              continue;
            }
          for (int k = 2; k <= 9; k++)
            {
              double v = k * pow (10, n);
              if (mp_axis_contains (axis, v))
                g_array_append_val (ticks, v);
            }
        }
    }
  else
    {
      double step = nice_step (axis->max - axis->min, max_ticks);
      double mag = pow (10, floor (log10 (step) + 1e-9));
      double norm = step / mag;
      int sub = (fabs (norm - 2) < 1e-6) ? 4 : 5;
      double minor = step / sub;
      double first = ceil (axis->min / minor - 1e-9);

      for (int i = 0; i < 1000; i++)
        {
          double v = (first + i) * minor;
          double r = v / step;
          if (v > axis->max + minor * 1e-9)
            break;
          if (fabs (r - round (r)) < 1e-6)
            continue;
          g_array_append_val (ticks, v);
        }
    }
  return ticks;
}

char *
mp_axis_format_tick (const MpAxis *axis, double value, int max_ticks)
{
  g_return_val_if_fail (axis != NULL, g_strdup (""));

  if (axis->log)
    {
      int n = (int) floor (log10 (value) + 1e-9);
      double mantissa = value / pow (10, n);
      int m = (int) lround (mantissa);

      if (value >= 0.01 * (1 - 1e-9) && value < 1e4)
        return g_strdup_printf ("%.*f", MAX (0, -n), value);
      if (m == 1 || fabs (mantissa - m) > 1e-6)
        return n < 0 ? g_strdup_printf ("10<sup>\xe2\x88\x92%d</sup>", -n)
                     : g_strdup_printf ("10<sup>%d</sup>", n);
      return n < 0 ? g_strdup_printf ("%d\xc3\x97" "10<sup>\xe2\x88\x92%d</sup>", m, -n)
                   : g_strdup_printf ("%d\xc3\x97" "10<sup>%d</sup>", m, n);
    }
  else
    {
      double step = nice_step (axis->max - axis->min, max_ticks);
      int decimals = MAX (0, (int) -floor (log10 (step) + 1e-9));
      char *text;

      if (fabs (value) < step * 1e-9)
        value = 0;
      text = g_strdup_printf ("%.*f", decimals, fabs (value));
      if (value < 0)
        {
          char *neg = g_strconcat ("\xe2\x88\x92", text, NULL);
          g_free (text);
          return neg;
        }
      return text;
    }
}

/* Ink */

void
mp_plot_ink_init (MpPlotInk *ink, gboolean dark, gboolean grey,
                  double font_size)
{
  g_return_if_fail (ink != NULL);
  ink->dark = dark;
  ink->grey = grey;
  ink->font_size = font_size > 0 ? font_size : 9;
}

static double
ink_grey (const MpPlotInk *ink, double level)
{
  double fg = ink->dark ? 0.93 : 0.0;
  double bg = ink->dark ? 0.13 : 1.0;

  return bg + (fg - bg) * CLAMP (level, 0, 1);
}

void
mp_plot_set_ink (cairo_t *cr, const MpPlotInk *ink, double level)
{
  double v = ink_grey (ink, level);

  cairo_set_source_rgb (cr, v, v, v);
}

void
mp_plot_set_ink_alpha (cairo_t *cr, const MpPlotInk *ink, double level,
                       double alpha)
{
  double v = ink_grey (ink, level);

  cairo_set_source_rgba (cr, v, v, v, alpha);
}

static const double series_rgb[][3] = {
  { 0.00, 0.30, 0.65 },   /* blue */
  { 0.80, 0.33, 0.00 },   /* orange */
  { 0.00, 0.50, 0.30 },   /* green */
  { 0.50, 0.20, 0.60 },   /* purple */
  { 0.65, 0.10, 0.10 },   /* red */
  { 0.35, 0.35, 0.35 },   /* grey */
};

static const double series_grey[] = { 1.0, 0.62, 0.85, 0.5, 0.75, 0.4 };

void
mp_plot_set_series_ink (cairo_t *cr, const MpPlotInk *ink, int series)
{
  int n = G_N_ELEMENTS (series_rgb);
  int i = ((series % n) + n) % n;

  if (ink->grey)
    {
      mp_plot_set_ink (cr, ink, series_grey[i]);
      return;
    }
  if (ink->dark)
    cairo_set_source_rgb (cr, 0.45 + 0.55 * series_rgb[i][0],
                          0.45 + 0.55 * series_rgb[i][1],
                          0.45 + 0.55 * series_rgb[i][2]);
  else
    cairo_set_source_rgb (cr, series_rgb[i][0], series_rgb[i][1],
                          series_rgb[i][2]);
}

void
mp_plot_set_series_dash (cairo_t *cr, int series, double line_width)
{
  double w = MAX (line_width, 0.5);
  double dashed[] = { 5 * w, 3 * w };
  double dotted[] = { 1 * w, 2 * w };
  double dash_dot[] = { 6 * w, 2.5 * w, 1.2 * w, 2.5 * w };
  double long_dash[] = { 10 * w, 3 * w };

  cairo_set_line_width (cr, line_width);
  switch (((series % 5) + 5) % 5)
    {
    case 0:
      cairo_set_dash (cr, NULL, 0, 0);
      break;
    case 1:
      cairo_set_dash (cr, dashed, 2, 0);
      break;
    case 2:
      cairo_set_dash (cr, dotted, 2, 0);
      break;
    case 3:
      cairo_set_dash (cr, dash_dot, 4, 0);
      break;
    default:
      cairo_set_dash (cr, long_dash, 2, 0);
      break;
    }
}

MpMarker
mp_plot_series_marker (int series)
{
  return (MpMarker) (((series % MP_MARKER_N) + MP_MARKER_N) % MP_MARKER_N);
}

void
mp_plot_draw_marker (cairo_t *cr, MpMarker marker, double x, double y,
                     double size, gboolean filled)
{
  double r = size / 2;

  cairo_save (cr);
  cairo_set_dash (cr, NULL, 0, 0);
  cairo_new_path (cr);
  switch (marker)
    {
    case MP_MARKER_SQUARE:
      cairo_rectangle (cr, x - r * 0.88, y - r * 0.88, 1.76 * r, 1.76 * r);
      break;
    case MP_MARKER_TRIANGLE:
      cairo_move_to (cr, x, y - r * 1.1);
      cairo_line_to (cr, x + r, y + r * 0.75);
      cairo_line_to (cr, x - r, y + r * 0.75);
      cairo_close_path (cr);
      break;
    case MP_MARKER_DOWN_TRIANGLE:
      cairo_move_to (cr, x, y + r * 1.1);
      cairo_line_to (cr, x + r, y - r * 0.75);
      cairo_line_to (cr, x - r, y - r * 0.75);
      cairo_close_path (cr);
      break;
    case MP_MARKER_DIAMOND:
      cairo_move_to (cr, x, y - r * 1.15);
      cairo_line_to (cr, x + r, y);
      cairo_line_to (cr, x, y + r * 1.15);
      cairo_line_to (cr, x - r, y);
      cairo_close_path (cr);
      break;
    case MP_MARKER_CIRCLE:
    default:
      cairo_arc (cr, x, y, r, 0, 2 * G_PI);
      break;
    }
  if (filled)
    cairo_fill_preserve (cr);
  cairo_set_line_width (cr, MAX (0.8, size / 7));
  cairo_stroke (cr);
  cairo_restore (cr);
}

/* Text */

/* One Pango context per thread, without hinting, so that text measures
 * the same on every surface and at every scale. Creating a context per
 * layout would cost more than the layout itself. */
static GPrivate text_context = G_PRIVATE_INIT (g_object_unref);

static PangoContext *
get_text_context (void)
{
  PangoContext *context = g_private_get (&text_context);
  cairo_font_options_t *options;

  if (context != NULL)
    return context;
  context = pango_font_map_create_context (pango_cairo_font_map_get_default ());
  options = cairo_font_options_create ();
  cairo_font_options_set_hint_metrics (options, CAIRO_HINT_METRICS_OFF);
  cairo_font_options_set_hint_style (options, CAIRO_HINT_STYLE_NONE);
  pango_cairo_context_set_font_options (context, options);
  cairo_font_options_destroy (options);
  pango_cairo_context_set_resolution (context, 72);
  pango_context_set_round_glyph_positions (context, FALSE);
  g_private_set (&text_context, context);
  return context;
}

PangoLayout *
mp_plot_create_layout (cairo_t *cr, const char *family, double size,
                       PangoWeight weight)
{
  PangoLayout *layout;
  PangoFontDescription *desc;

  g_return_val_if_fail (cr != NULL, NULL);

  layout = pango_layout_new (get_text_context ());

  desc = pango_font_description_from_string (family ? family : MP_PLOT_FONT);
  pango_font_description_set_absolute_size (desc, size * PANGO_SCALE);
  pango_font_description_set_weight (desc, weight);
  pango_layout_set_font_description (layout, desc);
  pango_font_description_free (desc);
  return layout;
}

void
mp_plot_text_size (cairo_t *cr, const char *markup, double size,
                   double *width, double *height)
{
  PangoLayout *layout = mp_plot_create_layout (cr, NULL, size,
                                               PANGO_WEIGHT_NORMAL);
  PangoRectangle logical;

  pango_layout_set_markup (layout, markup, -1);
  pango_layout_get_extents (layout, NULL, &logical);
  if (width)
    *width = (double) logical.width / PANGO_SCALE;
  if (height)
    *height = (double) logical.height / PANGO_SCALE;
  g_object_unref (layout);
}

void
mp_plot_show_text (cairo_t *cr, const MpPlotInk *ink, const char *markup,
                   double x, double y, double xalign, double yalign,
                   double size, double angle)
{
  PangoLayout *layout;
  PangoRectangle logical;
  double w, h;

  g_return_if_fail (cr != NULL && markup != NULL);

  cairo_save (cr);
  layout = mp_plot_create_layout (cr, NULL, size, PANGO_WEIGHT_NORMAL);
  pango_layout_set_markup (layout, markup, -1);
  pango_layout_get_extents (layout, NULL, &logical);
  w = (double) logical.width / PANGO_SCALE;
  h = (double) logical.height / PANGO_SCALE;
  cairo_translate (cr, x, y);
  if (angle != 0)
    cairo_rotate (cr, angle);
  cairo_move_to (cr, -xalign * w - (double) logical.x / PANGO_SCALE,
                 -yalign * h - (double) logical.y / PANGO_SCALE);
  if (ink != NULL)
    mp_plot_set_ink (cr, ink, 1);
  pango_cairo_show_layout (cr, layout);
  g_object_unref (layout);
  cairo_restore (cr);
}

/* Frame */

static double
widest_tick_label (cairo_t *cr, const MpAxis *axis, int max_ticks,
                   double size, double *height)
{
  g_autoptr (GArray) ticks = mp_axis_major_ticks (axis, max_ticks);
  double widest = 0, h = size;

  for (guint i = 0; i < ticks->len; i++)
    {
      g_autofree char *text = mp_axis_format_tick (axis,
                                                  g_array_index (ticks, double, i),
                                                  max_ticks);
      double w, th;

      mp_plot_text_size (cr, text, size, &w, &th);
      widest = MAX (widest, w);
      h = MAX (h, th);
    }
  if (height)
    *height = h;
  return widest;
}

void
mp_plot_frame_layout (MpPlotFrame *frame, cairo_t *cr,
                      const MpPlotInk *ink, double width, double height)
{
  double fs, tick_size, label_h, y_w, y2_w = 0, x_h, top, left, right, bottom;

  g_return_if_fail (frame != NULL && cr != NULL && ink != NULL);

  fs = ink->font_size;
  tick_size = fs * 0.92;
  if (frame->x_ticks <= 0)
    frame->x_ticks = MAX (3, (int) (width / (fs * 5.5)));
  if (frame->y_ticks <= 0)
    frame->y_ticks = MAX (3, (int) (height / (fs * 4)));

  label_h = fs * 1.3;
  y_w = widest_tick_label (cr, &frame->y_axis, frame->y_ticks, tick_size, NULL);
  if (frame->has_y2)
    y2_w = widest_tick_label (cr, &frame->y2_axis, frame->y_ticks, tick_size,
                              NULL);
  widest_tick_label (cr, &frame->x_axis, frame->x_ticks, tick_size, &x_h);

  top = frame->title ? label_h + GAP * 2 : fs * 0.8;
  left = GAP + (frame->y_label ? label_h + GAP : 0) + y_w + GAP + TICK_LEN;
  right = frame->has_y2
          ? TICK_LEN + GAP + y2_w + GAP + (frame->y2_label ? label_h : 0) + GAP
          : fs * 1.5;
  bottom = TICK_LEN + GAP + x_h + (frame->x_label ? GAP + label_h : 0) + GAP;

  frame->x = left;
  frame->y = top;
  frame->width = MAX (10, width - left - right);
  frame->height = MAX (10, height - top - bottom);
  mp_axis_set_position (&frame->x_axis, frame->x, frame->x + frame->width);
  mp_axis_set_position (&frame->y_axis, frame->y + frame->height, frame->y);
  if (frame->has_y2)
    mp_axis_set_position (&frame->y2_axis, frame->y + frame->height, frame->y);
}

void
mp_plot_frame_clip (cairo_t *cr, const MpPlotFrame *frame)
{
  cairo_rectangle (cr, frame->x, frame->y, frame->width, frame->height);
  cairo_clip (cr);
}

static void
draw_grid_lines (cairo_t *cr, const MpPlotFrame *frame, const MpAxis *axis,
                 gboolean vertical, GArray *values)
{
  for (guint i = 0; i < values->len; i++)
    {
      double p = floor (mp_axis_map (axis, g_array_index (values, double, i))) + 0.5;

      if (vertical)
        {
          cairo_move_to (cr, p, frame->y);
          cairo_line_to (cr, p, frame->y + frame->height);
        }
      else
        {
          cairo_move_to (cr, frame->x, p);
          cairo_line_to (cr, frame->x + frame->width, p);
        }
    }
  cairo_stroke (cr);
}

void
mp_plot_frame_draw_grid (cairo_t *cr, const MpPlotFrame *frame,
                         const MpPlotInk *ink)
{
  g_autoptr (GArray) xmaj = mp_axis_major_ticks (&frame->x_axis, frame->x_ticks);
  g_autoptr (GArray) ymaj = mp_axis_major_ticks (&frame->y_axis, frame->y_ticks);

  cairo_save (cr);
  cairo_set_dash (cr, NULL, 0, 0);
  cairo_set_line_width (cr, 0.5);
  mp_plot_set_ink (cr, ink, 0.18);
  draw_grid_lines (cr, frame, &frame->x_axis, TRUE, xmaj);
  draw_grid_lines (cr, frame, &frame->y_axis, FALSE, ymaj);
  if (frame->y_axis.log)
    {
      g_autoptr (GArray) ymin = mp_axis_minor_ticks (&frame->y_axis, frame->y_ticks);
      mp_plot_set_ink (cr, ink, 0.08);
      draw_grid_lines (cr, frame, &frame->y_axis, FALSE, ymin);
    }
  cairo_restore (cr);
}

static void
draw_ticks (cairo_t *cr, const MpPlotFrame *frame, const MpPlotInk *ink,
            const MpAxis *axis, int max_ticks, int side)
{
  /* side: 0 bottom, 1 left, 2 right */
  g_autoptr (GArray) major = mp_axis_major_ticks (axis, max_ticks);
  g_autoptr (GArray) minor = mp_axis_minor_ticks (axis, max_ticks);
  double tick_size = ink->font_size * 0.92;

  for (int pass = 0; pass < 2; pass++)
    {
      GArray *values = pass == 0 ? major : minor;
      double len = pass == 0 ? TICK_LEN : TICK_LEN * 0.55;

      for (guint i = 0; i < values->len; i++)
        {
          double v = g_array_index (values, double, i);
          double p = mp_axis_map (axis, v);

          if (side == 0)
            {
              cairo_move_to (cr, p, frame->y + frame->height);
              cairo_line_to (cr, p, frame->y + frame->height + len);
            }
          else if (side == 1)
            {
              cairo_move_to (cr, frame->x, p);
              cairo_line_to (cr, frame->x - len, p);
            }
          else
            {
              cairo_move_to (cr, frame->x + frame->width, p);
              cairo_line_to (cr, frame->x + frame->width + len, p);
            }
          cairo_stroke (cr);
          if (pass == 0)
            {
              g_autofree char *text = mp_axis_format_tick (axis, v, max_ticks);

              if (side == 0)
                mp_plot_show_text (cr, ink, text, p,
                                   frame->y + frame->height + TICK_LEN + GAP,
                                   0.5, 0, tick_size, 0);
              else if (side == 1)
                mp_plot_show_text (cr, ink, text, frame->x - TICK_LEN - GAP, p,
                                   1, 0.5, tick_size, 0);
              else
                mp_plot_show_text (cr, ink, text,
                                   frame->x + frame->width + TICK_LEN + GAP, p,
                                   0, 0.5, tick_size, 0);
            }
        }
    }
}

void
mp_plot_frame_draw_axes (cairo_t *cr, const MpPlotFrame *frame,
                         const MpPlotInk *ink)
{
  double fs = ink->font_size;

  cairo_save (cr);
  cairo_set_dash (cr, NULL, 0, 0);
  mp_plot_set_ink (cr, ink, 1);
  cairo_set_line_width (cr, 0.9);
  cairo_rectangle (cr, frame->x, frame->y, frame->width, frame->height);
  cairo_stroke (cr);
  cairo_set_line_width (cr, 0.7);
  draw_ticks (cr, frame, ink, &frame->x_axis, frame->x_ticks, 0);
  draw_ticks (cr, frame, ink, &frame->y_axis, frame->y_ticks, 1);
  if (frame->has_y2)
    draw_ticks (cr, frame, ink, &frame->y2_axis, frame->y_ticks, 2);

  if (frame->x_label)
    {
      double x_h;

      mp_plot_text_size (cr, "0", fs * 0.92, NULL, &x_h);
      mp_plot_show_text (cr, ink, frame->x_label,
                         frame->x + frame->width / 2,
                         frame->y + frame->height + TICK_LEN + GAP + x_h + GAP,
                         0.5, 0, fs, 0);
    }
  if (frame->y_label)
    mp_plot_show_text (cr, ink, frame->y_label, GAP,
                       frame->y + frame->height / 2, 0.5, 0, fs, -G_PI / 2);
  if (frame->has_y2 && frame->y2_label)
    {
      double w = widest_tick_label (cr, &frame->y2_axis, frame->y_ticks,
                                    fs * 0.92, NULL);
      mp_plot_show_text (cr, ink, frame->y2_label,
                         frame->x + frame->width + TICK_LEN + GAP + w + GAP,
                         frame->y + frame->height / 2, 0.5, 0, fs, -G_PI / 2);
    }
  if (frame->title)
    mp_plot_show_text (cr, ink, frame->title, frame->x, GAP, 0, 0, fs * 1.05, 0);
  cairo_restore (cr);
}
