package io.eigenmill.bench;

import static io.eigenmill.bench.BenchCase.APPLY;
import static io.eigenmill.bench.BenchCase.APPLY_PASS;
import static io.eigenmill.bench.BenchCase.BUILTIN_KMEANS;
import static io.eigenmill.bench.BenchCase.BUILTIN_PCA;
import static io.eigenmill.bench.BenchCase.FIT_COVARIANCE;
import static io.eigenmill.bench.BenchCase.FIT_RANDOMIZED;
import static io.eigenmill.bench.BenchCase.FIT_TSQR;
import static io.eigenmill.bench.BenchCase.KMEANS;
import static io.eigenmill.bench.BenchCase.READ_FLOOR;
import static io.eigenmill.bench.BenchCase.SQL_SUM;
import static io.eigenmill.bench.BenchCase.WRITE_FLOOR;

import io.eigenmill.bench.Ratio.Target;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * The ratios of the main results, of median times, and their targets. A ratio appears only when all its cases ran.
 *
 * <p>Targets: covariance fit <= 1.2 x read floor and <= 0.8 x SQL sum, and >= 6x faster than the engine's PCA;
 * TSQR <= 2 x read floor; randomized <= 1.2 x read floor per pass; apply <= 1.5 x (read floor + write floor);
 * k-means <= 1 x SQL sum and >= 5x faster than the engine's k-means, with a within-cluster sum of squares (wcss) no
 * worse.
 */
final class Ratios {
  private final Map<BenchCase, Timing> times;
  private final List<Ratio> out = new ArrayList<>();

  private Ratios(Map<BenchCase, Timing> times) {
    this.times = times;
  }

  /**
   * @param randomizedPasses passes over the data of the randomized fit (moments + power iterations + 1)
   * @param kmeans both k-means qualities, or null
   */
  static List<Ratio> of(Map<BenchCase, Timing> times, int randomizedPasses, MainResult.KMeansQuality kmeans) {
    Ratios r = new Ratios(times);
    r.fits(randomizedPasses);
    r.apply();
    r.kmeans(kmeans);
    return List.copyOf(r.out);
  }

  private void fits(int randomizedPasses) {
    over(FIT_COVARIANCE, READ_FLOOR, Target.atMost(1.2));
    over(FIT_COVARIANCE, SQL_SUM, Target.atMost(0.8));
    over(BUILTIN_PCA, FIT_COVARIANCE, Target.atLeast(6));
    over(FIT_TSQR, READ_FLOOR, Target.atMost(2));
    over(FIT_TSQR, SQL_SUM, null);
    over(FIT_RANDOMIZED, READ_FLOOR, null);
    over(FIT_RANDOMIZED, SQL_SUM, null);
    if (has(FIT_RANDOMIZED, READ_FLOOR) && randomizedPasses > 0) {
      add("fit-randomized / (" + randomizedPasses + " passes x read-floor)",
          median(FIT_RANDOMIZED) / (randomizedPasses * median(READ_FLOOR)), Target.atMost(1.2));
    }
  }

  private void apply() {
    for (BenchCase c : List.of(APPLY, APPLY_PASS)) {
      if (has(c, READ_FLOOR, WRITE_FLOOR)) {
        add(c.word() + " / (read-floor + write-floor)", median(c) / (median(READ_FLOOR) + median(WRITE_FLOOR)),
            Target.atMost(1.5));
      }
    }
  }

  private void kmeans(MainResult.KMeansQuality q) {
    over(KMEANS, SQL_SUM, Target.atMost(1));
    over(BUILTIN_KMEANS, KMEANS, Target.atLeast(5));
    if (q != null && !Double.isNaN(q.ours()) && !Double.isNaN(q.builtin())) {
      add("wcss: kmeans / builtin-kmeans", q.ours() / q.builtin(), Target.noWorseThan(1));
    }
  }

  private void over(BenchCase top, BenchCase bottom, Target target) {
    if (has(top, bottom)) {
      out.add(new Ratio(top.word() + " / " + bottom.word(), median(top) / median(bottom), target,
          inTurn(top, bottom)));
    }
  }

  /**
   * Repetition i of {@code top} over repetition i of {@code bottom}, when the two were timed in turn (same number of
   * repetitions, a pair of {@link MainCases#PAIRS}); empty otherwise.
   */
  private double[] inTurn(BenchCase top, BenchCase bottom) {
    boolean paired = MainCases.PAIRS.get(top) == bottom || MainCases.PAIRS.get(bottom) == top;
    double[] a = times.get(top).seconds();
    double[] b = times.get(bottom).seconds();
    if (!paired || a.length != b.length) {
      return new double[0];
    }
    double[] r = new double[a.length];
    for (int i = 0; i < r.length; i++) {
      r[i] = a[i] / b[i];
    }
    return r;
  }

  private void add(String name, double value, Target target) {
    out.add(new Ratio(name, value, target));
  }

  private boolean has(BenchCase... cases) {
    for (BenchCase c : cases) {
      if (!times.containsKey(c)) {
        return false;
      }
    }
    return true;
  }

  private double median(BenchCase c) {
    return times.get(c).median();
  }
}
