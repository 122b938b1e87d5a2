package io.eigenmill.cli;

import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.Map;
import org.apache.spark.sql.SparkSession;

/**
 * Opens the Spark session for a job. Under spark-submit (a master already given through system properties) or
 * inside a JVM that already has a SparkContext (tests), that context is reused and not stopped afterwards; otherwise
 * an embedded local session is started from {@code spark.master} and stopped at the end. Public so that the
 * benchmark's whole-process cases open their sessions exactly as the command line does.
 */
public final class Sessions {
  private static final ThreadLocal<Boolean> OWNED = ThreadLocal.withInitial(() -> Boolean.FALSE);

  private Sessions() {}

  /** The session for a job with {@code settings} (its {@code spark} section), as the command line opens it. */
  public static SparkSession open(JobSettings settings) {
    boolean existing = SparkSession.getDefaultSession().isDefined() || SparkSession.getActiveSession().isDefined();
    boolean submitted = System.getProperty("spark.master") != null;
    SparkSession.Builder builder = SparkSession.builder().appName("eigenmill: " + settings.name());
    if (!existing && !submitted) {
      builder = builder.master(settings.spark().master());
    }
    for (Map.Entry<String, String> e : settings.spark().conf().entrySet()) {
      builder = builder.config(e.getKey(), e.getValue());
    }
    if (!settings.spark().conf().containsKey("spark.redaction.regex")) {
      // Spark's own UI, event log and verbose output hide the keys eigenmill treats as secret
      builder = builder.config("spark.redaction.regex", Redaction.KEY_REGEX);
    }
    if (!settings.spark().conf().containsKey("spark.executorEnv.OPENBLAS_NUM_THREADS")) {
      // one BLAS thread per Spark task: OpenBLAS's own threads fight the task threads for the cores
      builder = builder.config("spark.executorEnv.OPENBLAS_NUM_THREADS", "1");
    }
    SparkSession spark = builder.getOrCreate();
    OWNED.set(!existing && !submitted);
    return spark;
  }

  /** Stops {@code spark} when {@link #open} started it on this thread; a reused session is left running. */
  public static void closeIfOwned(SparkSession spark) {
    if (spark != null && OWNED.get()) {
      spark.stop();
    }
    OWNED.set(Boolean.FALSE);
  }

  /** The {@link InvalidJobException} behind a Spark failure (e.g. thrown inside a task), or null. */
  static InvalidJobException userError(Throwable e) {
    for (Throwable t = e; t != null; t = t.getCause()) {
      if (t instanceof InvalidJobException invalid) {
        return invalid;
      }
    }
    return null;
  }
}
