package io.eigenmill.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.pca.FitTables;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.Choices.OutputMode;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.spark.scheduler.SparkListener;
import org.apache.spark.scheduler.SparkListenerJobStart;
import org.apache.spark.sql.Row;
import org.junit.jupiter.api.Test;

/**
 * Every step of a fit is timed in summary.json, and the fit's small tables (model, components, spectrum) are
 * written without a Spark job; the tables written so read back as the fit's values (the loadings of R's prcomp on
 * USArrests, via the shared dataset's reference, are the fit's own check in FitJobTest; here the table must hold
 * the fit result's numbers bit for bit).
 */
class RunStepsTest extends SparkSuite {
  private static final List<String> ARRESTS = List.of("Murder", "Assault", "UrbanPop", "Rape");

  @Test
  void everyStepIsTimedAndTheSmallTablesRunNoJob() throws Exception {
    Path out = JobFiles.scratch("run-steps").resolve("fit");
    RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + Datasets.csv("usarrests")
        + "\"\ninput.format = csv\nfeatures.columns = " + JobFiles.quoted(ARRESTS) + "\n"
        + "reduce.method = covariance\nreduce.components = 2\noutput.path = \"" + out + "\"\n"));
    JsonNode timings = new ObjectMapper().readTree(out.resolve("summary.json").toFile()).get("timings_seconds");
    List<String> keys = new ArrayList<>();
    timings.fieldNames().forEachRemaining(keys::add);
    // the runner's steps, in the order they ran, around the fit's own (plan, moments, covariance, model)
    List<String> expected = List.of("session", "check-input", "open-input", "planning", "plan", "moments",
        "covariance", "model", "write-model", "report", "summary");
    assertEquals(expected, keys.stream().filter(expected::contains).toList(), "timed steps in order: " + keys);
    timings.fields().forEachRemaining(e -> assertTrue(e.getValue().asDouble() >= 0, e.getKey() + " " + e.getValue()));

    AtomicInteger jobs = new AtomicInteger();
    SparkListener counter = new SparkListener() {
      @Override
      public void onJobStart(SparkListenerJobStart start) {
        jobs.incrementAndGet();
      }
    };
    Path again = JobFiles.scratch("run-steps-again").resolve("fit");
    OutputCommit commit = OutputCommit.begin(spark, again.toString(), OutputMode.FAIL_IF_EXISTS);
    spark.sparkContext().listenerBus().waitUntilEmpty();
    spark.sparkContext().addSparkListener(counter);
    try {
      FitTables.write(spark, run.fit(), commit);
      spark.sparkContext().listenerBus().waitUntilEmpty();
    } finally {
      spark.sparkContext().removeSparkListener(counter);
    }
    assertEquals(0, jobs.get(), "Spark jobs while the fit's model, components and spectrum were written");
    commit.commit();
    List<Row> loadings = spark.read().parquet(again.resolve("components").toString()).collectAsList();
    assertEquals(2 * ARRESTS.size(), loadings.size(), "loadings rows");
    for (int i = 0; i < loadings.size(); i++) {
      Row r = loadings.get(i);
      int c = i / ARRESTS.size();
      int j = i % ARRESTS.size();
      assertEquals(ARRESTS.get(j), r.getString(0), "feature of row " + i);
      assertEquals(c + 1, r.getInt(1), "component of row " + i);
      assertEquals(Double.doubleToRawLongBits(run.fit().spectrum().loading(j, c)),
          Double.doubleToRawLongBits(r.getDouble(2)), "loading of row " + i);
    }
  }

  /**
   * A run that fails after its small tables are staged (clustering 50 rows into 60 clusters fails after the fit's
   * tables are written) publishes nothing: no output folder and no staging folder beside it.
   */
  @Test
  void aRunThatFailsAfterTheSmallTablesPublishesNothing() throws Exception {
    Path parent = JobFiles.scratch("run-steps-fails");
    Path out = parent.resolve("fit");
    assertThrows(InvalidJobException.class, () -> JobRunner.run(spark, JobFiles.settings("input.path = \""
        + Datasets.csv("usarrests") + "\"\ninput.format = csv\nfeatures.columns = " + JobFiles.quoted(ARRESTS)
        + "\nreduce.components = 2\ncluster { enabled = true, k = 60 }\noutput.path = \"" + out + "\"\n")));
    assertFalse(Files.exists(out), "output.path after a failed run");
    try (var left = Files.list(parent)) {
      assertEquals(List.of(), left.toList(), "nothing beside output.path after a failed run");
    }
  }
}
