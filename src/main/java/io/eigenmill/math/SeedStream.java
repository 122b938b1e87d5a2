package io.eigenmill.math;

/**
 * Deterministic pseudo-random numbers for clustering, keyed by what they are for and never by where a row happens to
 * be processed. A <em>stream</em> is derived from (seed, purpose, k, restart, round); the number a stream gives a
 * point is a function of the stream and the point's 64-bit identity (a hash of its values, or of its entity key).
 * Sampling decisions therefore do not depend on the partitioning, the row order or the number of executors.
 *
 * <p>Mixing is the SplitMix64 finaliser (Steele, Lea and Flood 2014, "Fast splittable pseudorandom number
 * generators", OOPSLA), a bijection of 64-bit words with full avalanche; a unit number keeps the top 53 bits.
 */
public final class SeedStream {
  /** Purpose: the first centre of a k-means|| initialisation (the point of smallest unit number). */
  public static final int FIRST_CENTRE = 1;
  /** Purpose: the oversampling rounds of k-means||. */
  public static final int OVERSAMPLE = 2;
  /** Purpose: the weighted k-means++ over the candidates, on the driver. */
  public static final int PLUS_PLUS = 3;
  /** Purpose: the sample on which the silhouette is computed. */
  public static final int SILHOUETTE = 4;
  /** Purpose: the sample on which k-means|| chooses the starting centroids. */
  public static final int INIT_SAMPLE = 5;
  /** Purpose: the k-means++ seeding of one restart run on the driver over every point ({@code DriverRestarts}). */
  public static final int DRIVER_RESTART = 6;

  private static final long GOLDEN = 0x9e3779b97f4a7c15L;

  private SeedStream() {}

  /** The SplitMix64 finaliser. */
  public static long mix(long z) {
    z = (z ^ (z >>> 30)) * 0xbf58476d1ce4e5b9L;
    z = (z ^ (z >>> 27)) * 0x94d049bb133111ebL;
    return z ^ (z >>> 31);
  }

  /** The stream of one purpose for one run ({@code k}, {@code restart}) and one round. */
  public static long stream(long seed, int purpose, int k, int restart, int round) {
    long h = mix(seed + GOLDEN);
    h = mix(h + GOLDEN * (purpose + 1L));
    h = mix(h + GOLDEN * (k + 1L));
    h = mix(h + GOLDEN * (restart + 1L));
    return mix(h + GOLDEN * (round + 1L));
  }

  /** A number in [0, 1) that the stream gives the point of identity {@code id}: 53 uniform bits. */
  public static double unit(long stream, long id) {
    return (mix(stream ^ mix(id + GOLDEN)) >>> 11) * 0x1.0p-53;
  }
}
