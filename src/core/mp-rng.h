/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-rng.h: a small, splittable pseudo-random generator for the Monte
 * Carlo rehearsal.
 *
 * The generator is xoshiro256** (Blackman & Vigna, "Scrambled linear
 * pseudorandom number generators", ACM Trans. Math. Softw. 47 (2021) 36).
 * Independent streams are derived from (seed, a, b) by hashing the three
 * keys with the splitmix64 finaliser and filling the 256-bit state from a
 * splitmix64 sequence started at the hash (the seeding the xoshiro authors
 * recommend). A stream depends only on its keys, never on which thread
 * draws from it, so results do not depend on the number of threads.
 *
 * An MpRng is a plain struct: one per trial, never shared between threads. */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

typedef struct
{
  guint64 s[4];
} MpRng;

void mp_rng_init_stream (MpRng *rng, guint64 seed, guint64 a, guint64 b);

/* 64 random bits. */
static inline guint64
mp_rng_next (MpRng *rng)
{
  guint64 *s = rng->s;
  guint64 x = s[1] * 5;
  guint64 result = ((x << 7) | (x >> 57)) * 9;
  guint64 t = s[1] << 17;

  s[2] ^= s[0];
  s[3] ^= s[1];
  s[1] ^= s[2];
  s[0] ^= s[3];
  s[2] ^= t;
  s[3] = (s[3] << 45) | (s[3] >> 19);
  return result;
}

/* Uniform on [0, 1), 53 random bits. */
static inline double
mp_rng_uniform (MpRng *rng)
{
  return (mp_rng_next (rng) >> 11) * 0x1.0p-53;
}

/* Uniform on (0, 1], for logarithms. */
static inline double
mp_rng_uniform_pos (MpRng *rng)
{
  return ((mp_rng_next (rng) >> 11) + 1) * 0x1.0p-53;
}

/* Standard normal deviate (Marsaglia polar method). */
double mp_rng_gaussian (MpRng *rng);

/* Poisson deviate of mean mu >= 0: inversion by multiplication below 10,
 * Hormann's transformed rejection with squeeze (PTRS) above. Exact. */
gint64 mp_rng_poisson (MpRng *rng, double mu);

G_END_DECLS
