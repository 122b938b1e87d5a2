package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.kmeans.Summaries;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.FleetTables;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Unreadable Parquet files in the input (one cut in half, one that is not Parquet at all): by default the run stops
 * before computing anything, names every such file and exits with 2, writing nothing; with {@code
 * input.corrupt-files = skip} it leaves them out, says how many, and fits the rows of the readable files.
 */
class CorruptInputTest extends SparkSuite {
  private static final int ROWS = 2000;
  private static final int FILES = 8;

  private static Path dir;
  private static Path table;

  @BeforeAll
  static void fleetTable() throws IOException {
    dir = Files.createTempDirectory("eigenmill-corrupt-");
    table = dir.resolve("fleet");
    FleetTables.write(spark, table, ROWS, FILES, 5);
  }

  @AfterAll
  static void cleanUp() {
    LoopbackCluster.deleteTree(dir);
  }

  private static Path copyOfTable(String name) throws IOException {
    Path copy = dir.resolve(name);
    Files.createDirectories(copy);
    try (Stream<Path> files = Files.list(table)) {
      for (Path f : files.toList()) {
        Files.copy(f, copy.resolve(f.getFileName()));
      }
    }
    return copy;
  }

  private static List<Path> parquetFiles(Path folder) throws IOException {
    try (Stream<Path> files = Files.list(folder)) {
      return files.filter(f -> f.getFileName().toString().endsWith(".parquet")).sorted().toList();
    }
  }

  /** Cuts a file to half its length, as an interrupted copy would, and drops its checksum file. */
  private static void truncate(Path file) throws IOException {
    byte[] bytes = Files.readAllBytes(file);
    Files.write(file, Arrays.copyOf(bytes, bytes.length / 2));
    Files.deleteIfExists(file.resolveSibling("." + file.getFileName() + ".crc"));
  }

  private static Path job(String name, Path input, Path out) throws IOException {
    Path f = dir.resolve(name + ".conf");
    Files.writeString(f, "input.path = \"" + input + "\"\nfeatures.keys = [host, region]\n"
        + "output.path = \"" + out + "\"\n");
    return f;
  }

  @Test
  void unreadableFilesStopTheRunWithTheirNamesAndExitCodeTwo() throws IOException {
    Path input = copyOfTable("broken");
    Path cut = parquetFiles(input).get(3);
    truncate(cut);
    Path garbage = input.resolve("part-99999-not-parquet.snappy.parquet");
    Files.writeString(garbage, "host,cpu\nedge-1,42\n");
    Path out = dir.resolve("out-broken");
    Path f = job("broken", input, out);

    CommandRun run = CommandRun.of("run", f.toString());
    assertEquals(2, run.code(), "exit code 2 (bad input), as Main documents:\n" + run.err());
    String first = run.err().lines().findFirst().orElse("");
    assertTrue(first.startsWith("eigenmill: error: input.path = " + input + ": 2 of " + (FILES + 1)
        + " Parquet files cannot be read: "), "one error naming the count (the table has " + FILES
        + " data files plus the garbage one; _SUCCESS and .crc files are not data):\n" + run.err());
    assertTrue(first.contains(cut.getFileName() + " (") && first.contains(garbage.getFileName() + " ("),
        "both unreadable files are named:\n" + first);
    assertTrue(first.contains("is not a Parquet file"), "the reader's reason is given:\n" + first);
    assertTrue(first.endsWith("or set input.corrupt-files = skip to leave unreadable files out"), first);
    assertFalse(Files.exists(out), "nothing is written");
    try (Stream<Path> siblings = Files.list(dir)) {
      assertTrue(siblings.noneMatch(p -> p.getFileName().toString().startsWith(".out-broken")),
          "no staging folder either");
    }
    CommandRun plan = CommandRun.of("plan", f.toString());
    assertEquals(2, plan.code(), "plan checks the files too");
    assertEquals(run.err(), plan.err(), "plan reports the same problem");
  }

  @Test
  void skipLeavesUnreadableFilesOutAndSaysHowMany() throws IOException {
    Path input = copyOfTable("skip");
    // Spark reads the schema from the first data file in path order (it sorts the files by path before picking one);
    // damaging the last one keeps this test about skipping rather than about schema inference.
    List<Path> files = parquetFiles(input);
    Path cut = files.get(files.size() - 1);
    long rowsOfCut = spark.read().parquet(cut.toString()).count();
    assertTrue(rowsOfCut > 0, "the damaged file had rows");
    truncate(cut);
    Path out = dir.resolve("out-skip");
    Path f = job("skip", input, out);

    CommandRun run = CommandRun.of("run", f.toString(), "--set", "input.corrupt-files = skip");
    assertEquals(0, run.code(), run.err());
    assertTrue(run.out().contains("warning: input.corrupt-files = skip: 1 of " + FILES
        + " Parquet files skipped, they cannot be read: "), run.out());
    assertTrue(run.out().contains(cut.getFileName().toString()), "the skipped file is named:\n" + run.out());
    assertEquals(ROWS - rowsOfCut, Summaries.read(out).get("rows_read").asLong(),
        "rows read: the table's " + ROWS + " less the " + rowsOfCut + " of the skipped file");
  }

  @Test
  void aSoundInputHasNoUnreadableFiles() {
    InputFiles.Check check = InputFiles.scan(spark.sparkContext().hadoopConfiguration(), table.toString());
    assertEquals(FILES, check.files(), "the data files written by this test (not _SUCCESS, not .crc)");
    assertEquals(FILES, check.readable().size(), "every one of them is readable");
    assertTrue(check.unreadable().isEmpty(), check.unreadable().toString());
    assertEquals("", check.skipWarning());
  }
}
