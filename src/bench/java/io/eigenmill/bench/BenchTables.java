package io.eigenmill.bench;

import io.eigenmill.Version;
import io.eigenmill.demo.FleetTelemetryGenerator.FleetSpec;
import io.eigenmill.demo.FleetTelemetryGenerator;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Locale;
import java.util.stream.Stream;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.ByteType;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DoubleType;
import org.apache.spark.sql.types.FloatType;
import org.apache.spark.sql.types.IntegerType;
import org.apache.spark.sql.types.LongType;
import org.apache.spark.sql.types.ShortType;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;

/**
 * Generates the benchmark's fleet tables once and reuses them: a table folder holds a spec file written after the
 * table itself, and a folder whose spec file matches the wanted specification (generator parameters and product
 * version) is reused as is; anything else in its place is deleted and regenerated.
 *
 * <p>Width: the generator's base metrics plus {@code d - base} extra metrics; for d below the base count, the first
 * d base metrics of the full table. Partitions (the generator writes that many files per day): one per
 * {@link #CELLS_PER_PARTITION} values, so that files hold tens of MB; a single one from {@link #WIDE} features on,
 * because Spark 3.5's vectorised Parquet reader pays O(d^2) each time it opens a file (measured: about 2 s per file
 * at d = 20,000), so a wide table should come in few files.
 */
final class BenchTables {
  static final List<String> KEYS = List.of("host", "region", "workload", "ts");
  static final String PARTITION_COLUMN = "date";
  static final String SPEC_FILE = "_EIGENMILL_BENCH_SPEC";
  static final long CELLS_PER_PARTITION = 50_000_000L;
  static final int WIDE = 1000;

  private BenchTables() {}

  /** The table of {@code rows} x {@code d} features under {@code data}, generated when not already there. */
  static BenchTable prepare(SparkSession spark, Path data, long rows, int d) {
    FleetSpec defaults = FleetSpec.defaults();
    int base = numericColumns(FleetTelemetryGenerator.generate(spark, new FleetSpec(16, defaults.seed(), 0, 1,
        defaults.startDate())).schema()).size();
    int extra = Math.max(0, d - base);
    FleetSpec spec = new FleetSpec(rows, defaults.seed(), extra, partitionsFor(rows, base + extra),
        defaults.startDate());
    Path dir = data.resolve(String.format(Locale.ROOT, "fleet-%d-rows-%d-metrics", rows, base + extra))
        .toAbsolutePath();
    String specText = spec + "\neigenmill " + Version.current() + "\n";
    double seconds = 0;
    if (!specText.equals(readSpec(dir))) {
      System.out.printf(Locale.ROOT, "bench: generating %,d rows x %d metrics into %s%n", rows, base + extra, dir);
      long t0 = System.nanoTime();
      deleteTree(dir);
      FleetTelemetryGenerator.write(spark, spec, dir.toString());
      writeSpec(dir, specText);
      seconds = (System.nanoTime() - t0) / 1e9;
    } else {
      System.out.printf(Locale.ROOT, "bench: reusing %s%n", dir);
    }
    List<String> numeric = numericColumns(spark.read().parquet(dir.toString()).schema());
    if (numeric.size() < d) {
      throw new IllegalStateException("the generated table " + dir + " has " + numeric.size()
          + " numeric metrics, fewer than the " + d + " features asked for");
    }
    return new BenchTable(dir.toString(), rows, List.copyOf(numeric.subList(0, d)), KEYS, spec.toString(), seconds);
  }

  static int partitionsFor(long rows, int columns) {
    if (columns >= WIDE) {
      return 1;
    }
    long cells = rows * columns;
    return (int) Math.max(1, (cells + CELLS_PER_PARTITION - 1) / CELLS_PER_PARTITION);
  }

  /** Numeric columns that are neither keys nor the partition column, in schema order. */
  static List<String> numericColumns(StructType schema) {
    List<String> out = new ArrayList<>();
    for (StructField f : schema.fields()) {
      if (!KEYS.contains(f.name()) && !f.name().equals(PARTITION_COLUMN) && numeric(f.dataType())) {
        out.add(f.name());
      }
    }
    return out;
  }

  static boolean numeric(DataType t) {
    return t instanceof DoubleType || t instanceof FloatType || t instanceof IntegerType || t instanceof LongType
        || t instanceof ShortType || t instanceof ByteType;
  }

  static String readSpec(Path dir) {
    Path file = dir.resolve(SPEC_FILE);
    try {
      return Files.isRegularFile(file) ? Files.readString(file, StandardCharsets.UTF_8) : null;
    } catch (IOException e) {
      return null;
    }
  }

  static void writeSpec(Path dir, String text) {
    try {
      Files.writeString(dir.resolve(SPEC_FILE), text, StandardCharsets.UTF_8);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot write " + dir.resolve(SPEC_FILE), e);
    }
  }

  /** Deletes {@code dir} and everything under it (nothing when it does not exist). */
  static void deleteTree(Path dir) {
    if (!Files.exists(dir)) {
      return;
    }
    try (Stream<Path> walk = Files.walk(dir)) {
      for (Path p : walk.sorted(Comparator.reverseOrder()).toList()) {
        Files.delete(p);
      }
    } catch (IOException e) {
      throw new UncheckedIOException("cannot delete " + dir, e);
    }
  }
}
