package io.eigenmill.bench;

import java.util.Locale;
import java.util.concurrent.Callable;
import org.apache.spark.SparkContext;

/**
 * Runs a case: untimed warm-ups, then timed repetitions, each preceded by a full garbage collection so that one
 * repetition does not pay for the garbage of the previous one. The Spark jobs of the case carry its name as their
 * description (the Spark UI and logs say what is running).
 */
final class Timer {
  private Timer() {}

  /** The timing and the value returned by the last repetition. */
  record Timed<T>(Timing timing, T last) {}

  static <T> Timed<T> run(SparkContext sc, String name, int warmups, int reps, Callable<T> body) {
    String before = sc.getLocalProperty("spark.job.description");
    try {
      T last = null;
      for (int w = 0; w < warmups; w++) {
        sc.setJobDescription("eigenmill benchmark: " + name + " (warm-up)");
        last = call(body);
        System.out.printf(Locale.ROOT, "bench: %-16s warm-up done%n", name);
      }
      double[] seconds = new double[reps];
      for (int r = 0; r < reps; r++) {
        System.gc();
        sc.setJobDescription("eigenmill benchmark: " + name + " (" + (r + 1) + "/" + reps + ")");
        long t0 = System.nanoTime();
        last = call(body);
        seconds[r] = (System.nanoTime() - t0) / 1e9;
        System.out.printf(Locale.ROOT, "bench: %-16s %d/%d  %.3f s%n", name, r + 1, reps, seconds[r]);
      }
      return new Timed<>(new Timing(seconds), last);
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
