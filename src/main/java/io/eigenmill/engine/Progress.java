package io.eigenmill.engine;

import java.util.Locale;
import org.apache.spark.SparkStageInfo;
import org.apache.spark.SparkStatusTracker;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.util.LongAccumulator;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Labels the Spark work of one stage (job group with a readable description) and logs its progress every few
 * seconds: tasks done of the stage's tasks, and rows read so far (counted as partitions finish).
 */
public final class Progress implements AutoCloseable {
  private static final Logger LOG = LoggerFactory.getLogger("io.eigenmill.progress");
  private static final long PERIOD_MS = 3000;

  private final SparkSession spark;
  private final String stage;
  private final LongAccumulator rows;
  private final long started = System.nanoTime();
  private final Thread ticker;
  private volatile boolean running = true;

  private Progress(SparkSession spark, String stage, LongAccumulator rows) {
    this.spark = spark;
    this.stage = stage;
    this.rows = rows;
    spark.sparkContext().setJobGroup("eigenmill-" + stage, "eigenmill: " + stage, false);
    LOG.info("{}: started", stage);
    ticker = new Thread(this::tick, "eigenmill-progress-" + stage);
    ticker.setDaemon(true);
    ticker.start();
  }

  public static Progress start(SparkSession spark, String stage, LongAccumulator rows) {
    return new Progress(spark, stage, rows);
  }

  private void tick() {
    SparkStatusTracker tracker = spark.sparkContext().statusTracker();
    while (running) {
      try {
        Thread.sleep(PERIOD_MS);
      } catch (InterruptedException e) {
        return;
      }
      int done = 0;
      int total = 0;
      for (int id : tracker.getActiveStageIds()) {
        scala.Option<SparkStageInfo> info = tracker.getStageInfo(id);
        if (info.isDefined()) {
          done += info.get().numCompletedTasks();
          total += info.get().numTasks();
        }
      }
      if (running) {
        LOG.info("{}: tasks {}/{}, rows read {}, {} s", stage, done, total, String.format(Locale.ROOT, "%,d",
            rows == null ? 0 : rows.value()), seconds());
      }
    }
  }

  private String seconds() {
    return String.format(Locale.ROOT, "%.1f", (System.nanoTime() - started) / 1e9);
  }

  /** Logs the end of the stage with the number of rows it read. */
  public void done(long rowsRead) {
    LOG.info("{}: done, {} rows in {} s", stage, String.format(Locale.ROOT, "%,d", rowsRead), seconds());
  }

  @Override
  public void close() {
    running = false;
    ticker.interrupt();
    spark.sparkContext().clearJobGroup();
  }
}
