package io.eigenmill.io;

import io.eigenmill.engine.SparkLine;
import java.util.Map;
import org.apache.spark.sql.SparkSession;

/**
 * The session eigenmill writes its tables through. Spark 3.5 writes timestamp columns as Parquet INT96 by default:
 * a legacy physical type without a logical type, which readers other than Spark take for a timestamp without time
 * zone. Every eigenmill table is written instead with timestamps as Parquet {@code TIMESTAMP(isAdjustedToUTC = true,
 * MICROS)}: an instant, microseconds since the epoch in UTC, whatever the writer's or the reader's time zone.
 * {@code timestamp_ntz} columns stay {@code TIMESTAMP(isAdjustedToUTC = false, MICROS)} and dates stay {@code DATE}
 * (Spark writes those the same way under either setting).
 *
 * <p>The setting goes into a copy of the caller's session (the same SparkContext and cache, the caller's SQL settings
 * as they were at the copy), so a caller's own session keeps its value: running a job from a notebook or a test does
 * not change how that session writes afterwards, even when other queries run on it at the same time.
 */
public final class WriterSession {
  /** The Spark SQL setting that chooses the Parquet type of timestamp columns. */
  public static final String TIMESTAMP_TYPE = "spark.sql.parquet.outputTimestampType";
  /** Its value for eigenmill's writes: Parquet TIMESTAMP, microseconds, adjusted to UTC. */
  public static final String MICROS = "TIMESTAMP_MICROS";

  private WriterSession() {}

  /**
   * A session that writes timestamps as {@link #MICROS}: {@code caller} itself when it already does, or when the
   * job's {@code spark.conf} ({@code jobConf}) sets {@value #TIMESTAMP_TYPE} itself (a deliberate choice, e.g.
   * INT96 for a legacy reader, that the job keeps); otherwise a copy of {@code caller} with the setting.
   */
  public static SparkSession of(SparkSession caller, Map<String, String> jobConf) {
    if (jobConf.containsKey(TIMESTAMP_TYPE) || MICROS.equals(caller.conf().get(TIMESTAMP_TYPE, null))) {
      return caller;
    }
    // unlike newSession, a clone keeps the caller's runtime settings (e.g. a job's spark.conf applied to an existing
    // session), and it shares the SparkContext
    SparkSession copy = SparkLine.cloneSession(caller);
    copy.conf().set(TIMESTAMP_TYPE, MICROS);
    return copy;
  }
}
