/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-rng.c: stream derivation, Gaussian and Poisson deviates. */
#include "config.h"

#include "mp-rng.h"

#include <math.h>

/* splitmix64 (Steele, Lea & Flood, "Fast splittable pseudorandom number
 * generators", OOPSLA 2014): the finaliser is a bijection on 64 bits. */
static guint64
mix64 (guint64 z)
{
  z = (z ^ (z >> 30)) * G_GUINT64_CONSTANT (0xbf58476d1ce4e5b9);
  z = (z ^ (z >> 27)) * G_GUINT64_CONSTANT (0x94d049bb133111eb);
  return z ^ (z >> 31);
}

#define MP_GOLDEN_GAMMA G_GUINT64_CONSTANT (0x9e3779b97f4a7c15)

void
mp_rng_init_stream (MpRng *rng, guint64 seed, guint64 a, guint64 b)
{
  guint64 z;

  g_return_if_fail (rng != NULL);

  /* Chain the keys through the bijective mixer so that (seed, a, b) and
   * any permutation of them land far apart. */
  z = mix64 (seed + MP_GOLDEN_GAMMA);
  z = mix64 (z ^ (a + 2 * MP_GOLDEN_GAMMA));
  z = mix64 (z ^ (b + 3 * MP_GOLDEN_GAMMA));
  for (int i = 0; i < 4; i++)
    {
      z += MP_GOLDEN_GAMMA;
      rng->s[i] = mix64 (z);
    }
  /* The all-zero state is the one forbidden state of xoshiro. */
  if ((rng->s[0] | rng->s[1] | rng->s[2] | rng->s[3]) == 0)
    rng->s[0] = 1;
}

double
mp_rng_gaussian (MpRng *rng)
{
  double u, v, s;

  do
    {
      u = 2.0 * mp_rng_uniform (rng) - 1.0;
      v = 2.0 * mp_rng_uniform (rng) - 1.0;
      s = u * u + v * v;
    }
  while (s >= 1.0 || s == 0.0);
  /* The second deviate v * f is dropped so that a draw costs a fixed
   * number of calls per accepted pair: streams stay simple to reason on. */
  return u * sqrt (-2.0 * log (s) / s);
}

static gint64
poisson_small (MpRng *rng, double mu)
{
  double limit = exp (-mu), prod = mp_rng_uniform (rng);
  gint64 k = 0;

  while (prod > limit)
    {
      prod *= mp_rng_uniform (rng);
      k++;
    }
  return k;
}

/* PTRS: W. Hormann, "The transformed rejection method for generating
 * Poisson random variables", Insurance: Mathematics and Economics 12
 * (1993) 39-45; constants as given there for mu >= 10. */
static gint64
poisson_ptrs (MpRng *rng, double mu)
{
  double slam = sqrt (mu), loglam = log (mu);
  double b = 0.931 + 2.53 * slam;
  double a = -0.059 + 0.02483 * b;
  double invalpha = 1.1239 + 1.1328 / (b - 3.4);
  double vr = 0.9277 - 3.6224 / (b - 2.0);
  int sign;

  /* lgamma_r: plain lgamma writes the global signgam (a data race). */
  for (;;)
    {
      double u = mp_rng_uniform (rng) - 0.5;
      double v = mp_rng_uniform (rng);
      double us = 0.5 - fabs (u);
      double k = floor ((2.0 * a / us + b) * u + mu + 0.43);

      if (us >= 0.07 && v <= vr)
        return (gint64) k;
      if (k < 0.0 || (us < 0.013 && v > us))
        continue;
      if (log (v) + log (invalpha) - log (a / (us * us) + b)
          <= -mu + k * loglam - lgamma_r (k + 1.0, &sign))
        return (gint64) k;
    }
}

gint64
mp_rng_poisson (MpRng *rng, double mu)
{
  g_return_val_if_fail (rng != NULL, 0);

  if (!(mu > 0.0))
    return 0;
  if (mu < 10.0)
    return poisson_small (rng, mu);
  return poisson_ptrs (rng, mu);
}
