package io.eigenmill.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The local runner's {@code --with iceberg} (local-demo/eigenmill): refused on the Spark 4 line and any other value
 * refused, both with one message and exit 2, before any build (the script is run for real, with bash).
 */
class RunnerWithIcebergTest {
  private record Result(int code, String err) {}

  private static Result runner(Map<String, String> env, String... args) throws IOException, InterruptedException {
    List<String> command = new java.util.ArrayList<>(List.of("bash", Path.of("local-demo", "eigenmill").toString()));
    command.addAll(List.of(args));
    ProcessBuilder pb = new ProcessBuilder(command).redirectOutput(ProcessBuilder.Redirect.DISCARD);
    pb.environment().putAll(env);
    Process p = pb.start();
    String err = new String(p.getErrorStream().readAllBytes(), StandardCharsets.UTF_8);
    return new Result(p.waitFor(), err);
  }

  @Test
  void refusedOnTheSpark4LineForRunAndPlan() throws Exception {
    for (String command : List.of("run", "plan")) {
      Result r = runner(Map.of("EIGENMILL_SPARK", "4"), command, "jobs/fleet-apply-tables.conf", "--with", "iceberg");
      assertEquals(2, r.code(), r.err());
      assertEquals(1, r.err().strip().lines().count(), r.err());
      assertTrue(r.err().contains("--with iceberg") && r.err().contains("Spark 4"), r.err());
    }
  }

  @Test
  void onlyIcebergIsAccepted() throws Exception {
    Result r = runner(Map.of("EIGENMILL_SPARK", "3.5"), "run", "jobs/fleet-apply-tables.conf", "--with", "delta");
    assertEquals(2, r.code(), r.err());
    assertTrue(r.err().contains("--with delta") && r.err().contains("expected --with iceberg"), r.err());
  }
}
