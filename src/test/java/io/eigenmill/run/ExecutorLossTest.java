package io.eigenmill.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.eigenmill.cli.Main;
import io.eigenmill.kmeans.Summaries;
import io.eigenmill.testing.FleetTables;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SharedCluster;
import io.eigenmill.testing.SparkSuite;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.PrintStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;

/**
 * An executor JVM killed (SIGKILL, by its process id) while the fit's moments pass runs, after at least one of that
 * pass's tasks finished: Spark reruns the lost work on the remaining and relaunched executors, the job completes,
 * and since each partition's partial is a pure function of its rows, no row is counted twice: the numbers equal an
 * undisturbed run.
 */
@Tag("cluster")
@ExtendWith(SharedCluster.class)
class ExecutorLossTest extends SparkSuite {
  private static final int ROWS = 24_000;
  private static final int FILES = 60;
  private static final Pattern TASK_LINE = Pattern.compile("Executor: (Running|Finished) task [0-9.]+ in stage");

  private static Path dir;
  private static Path job;

  @BeforeAll
  static void fleetTable() throws IOException {
    dir = Files.createTempDirectory("eigenmill-executor-loss-");
    Path table = dir.resolve("fleet");
    FleetTables.write(spark, table, ROWS, FILES, 23);
    // one partition per file: 60 small tasks, so the pass is still running when the executor dies
    job = FleetTables.fitJob(dir, table, "reduce.components = 5");
  }

  @AfterAll
  static void cleanUp() {
    LoopbackCluster.deleteTree(dir);
  }

  @Test
  void aKilledExecutorMidFitLeavesTheNumbersUnchanged(LoopbackCluster cluster) throws Exception {
    Path out = dir.resolve("out-cluster");
    long killedExecutor;
    int exit;
    String stderr;
    try (LoopbackCluster.Submission run = cluster.submit("executor-loss",
        List.of(job.toString(), "--set", "output.path=\"" + out + "\""))) {
      assertTrue(LoopbackCluster.poll(Duration.ofSeconds(240), () -> run.stderr().contains("fit/moments: started")
          || !run.driver().isAlive()), "the driver starts the fit's moments pass");
      assertTrue(run.driver().isAlive(), "the driver is still running:\n" + run.stderr());
      // Every task line of earlier jobs (schema, listing) is written before the driver moves on, so a task that
      // finishes from here on is a task of the moments pass.
      int before = finishedTasks(run);
      assertTrue(LoopbackCluster.poll(Duration.ofSeconds(120), () -> finishedTasks(run) > before
          || !run.driver().isAlive()), "a task of the moments pass finishes");
      assertFalse(run.stderr().contains("fit/moments: done"),
          "the moments pass is still running when the executor is killed:\n" + run.stderr());
      String app = run.appId().orElseThrow();
      killedExecutor = busyExecutor(run);
      ProcessHandle victim = cluster.executors(app).stream()
          .filter(p -> p.info().commandLine().orElse("").contains("--executor-id " + killedExecutor + " "))
          .findFirst().orElseThrow(() -> new AssertionError("no process for executor " + killedExecutor + " of "
              + app + " among the workers' children"));
      victim.destroyForcibly();
      victim.onExit().get(30, TimeUnit.SECONDS);
      exit = run.awaitExit(Duration.ofSeconds(300));
      stderr = run.stderr();
    }
    assertEquals(0, exit, "the job completes after losing an executor:\n" + stderr);
    assertTrue(stderr.contains("Lost executor " + killedExecutor + " on 127.0.0.1"),
        "the driver noticed the loss (Spark's TaskSchedulerImpl logs 'Lost executor N on HOST'):\n" + stderr);

    Path localOut = dir.resolve("out-local");
    ByteArrayOutputStream err = new ByteArrayOutputStream();
    int localExit = Main.run(new String[] {"run", job.toString(), "--set", "output.path=\"" + localOut + "\""},
        new PrintStream(new ByteArrayOutputStream(), true, StandardCharsets.UTF_8),
        new PrintStream(err, true, StandardCharsets.UTF_8));
    assertEquals(0, localExit, err.toString(StandardCharsets.UTF_8));
    JsonNode actual = Summaries.read(out);
    assertEquals(ROWS, actual.get("rows_read").asLong(), "rows read: the table written by this test has " + ROWS
        + " (a retried task must not count its rows twice)");
    Summaries.assertSameFit(Summaries.read(localOut), actual,
        "the undisturbed local[2] run of the same job in this JVM (Main.run)");
  }

  /** Task lines "Finished task" in this application's executor logs so far. */
  private static int finishedTasks(LoopbackCluster.Submission run) {
    int n = 0;
    for (Path log : run.executorLogs("stderr")) {
      Matcher m = TASK_LINE.matcher(read(log));
      while (m.find()) {
        if (m.group(1).equals("Finished")) {
          n++;
        }
      }
    }
    return n;
  }

  /** The id of an executor whose last task line says it is running a task (else the first executor's id). */
  private static long busyExecutor(LoopbackCluster.Submission run) {
    List<Path> logs = run.executorLogs("stderr");
    assertFalse(logs.isEmpty(), "executor logs of the application");
    for (Path log : logs) {
      Matcher m = TASK_LINE.matcher(read(log));
      String last = null;
      while (m.find()) {
        last = m.group(1);
      }
      if ("Running".equals(last)) {
        return Long.parseLong(log.getParent().getFileName().toString());
      }
    }
    return Long.parseLong(logs.get(0).getParent().getFileName().toString());
  }

  private static String read(Path p) {
    try {
      return Files.readString(p, StandardCharsets.ISO_8859_1);
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
