package io.eigenmill.bench;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import org.apache.spark.SparkContext;

/**
 * Runs cases: untimed warm-ups, then timed repetitions, each preceded by a full garbage collection so that one
 * repetition does not pay for the garbage of the previous one. Several cases can be timed in turn (repetition 1 of
 * each, then repetition 2 of each, ...), so that a slow spell of a shared machine falls on all of them rather than
 * on whichever ran then. The Spark jobs of a case carry its name as their description (the Spark UI and logs say
 * what is running).
 */
final class Timer {
  private Timer() {}

  /** The timing and the value returned by the last repetition. */
  record Timed<T>(Timing timing, T last) {}

  /** A named body to time. */
  record Case<T>(String name, Callable<T> body) {}

  static <T> Timed<T> run(SparkContext sc, String name, int warmups, int reps, Callable<T> body) {
    @SuppressWarnings("unchecked")
    Timed<T> t = (Timed<T>) runInTurn(sc, warmups, reps, List.of(new Case<>(name, body))).get(0);
    return t;
  }

  /** Warm-ups of every case in order, then the repetitions of all cases in turn; results in the cases' order. */
  static List<Timed<?>> runInTurn(SparkContext sc, int warmups, int reps, List<Case<?>> cases) {
    String before = sc.getLocalProperty("spark.job.description");
    try {
      Object[] last = new Object[cases.size()];
      for (int c = 0; c < cases.size(); c++) {
        for (int w = 0; w < warmups; w++) {
          sc.setJobDescription("eigenmill benchmark: " + cases.get(c).name() + " (warm-up)");
          last[c] = call(cases.get(c).body());
          System.out.printf(Locale.ROOT, "bench: %-16s warm-up done%n", cases.get(c).name());
        }
      }
      double[][] seconds = new double[cases.size()][reps];
      for (int r = 0; r < reps; r++) {
        for (int c = 0; c < cases.size(); c++) {
          String name = cases.get(c).name();
          System.gc();
          sc.setJobDescription("eigenmill benchmark: " + name + " (" + (r + 1) + "/" + reps + ")");
          long t0 = System.nanoTime();
          last[c] = call(cases.get(c).body());
          seconds[c][r] = (System.nanoTime() - t0) / 1e9;
          System.out.printf(Locale.ROOT, "bench: %-16s %d/%d  %.3f s%n", name, r + 1, reps, seconds[c][r]);
        }
      }
      List<Timed<?>> out = new ArrayList<>();
      for (int c = 0; c < cases.size(); c++) {
        out.add(new Timed<>(new Timing(seconds[c]), last[c]));
      }
      return out;
    } finally {
      sc.setJobDescription(before);
    }
  }

  private static <T> T call(Callable<T> body) {
    try {
      return body.call();
    } catch (RuntimeException e) {
      throw e;
    } catch (Exception e) {
      throw new IllegalStateException(e);
    }
  }
}
