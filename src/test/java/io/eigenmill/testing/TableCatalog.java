package io.eigenmill.testing;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * The catalog of the table tests: Apache Iceberg's Spark catalog over a file-system warehouse in a temporary folder
 * (no server), registered in every test session as {@value #NAME}. Each test takes its own namespace
 * ({@link #freshNamespace}) so that tables of different tests never meet.
 */
public final class TableCatalog {
  /** The catalog's name in {@code spark.sql.catalog.<name>}: tables are {@code lake.<namespace>.<table>}. */
  public static final String NAME = "lake";

  /**
   * The tag of every test that needs the Iceberg runtime: the build leaves them out on a Spark line for which no
   * Iceberg runtime loads (pom.xml, tests.excluded.tags; today the 4.2 line).
   */
  public static final String TAG = "iceberg";

  private static final AtomicInteger NEXT = new AtomicInteger();
  private static Path warehouse;

  private TableCatalog() {}

  /** The warehouse folder of this JVM (created on first use, deleted by the JVM's temporary-folder cleanup). */
  public static synchronized Path warehouse() {
    if (warehouse == null) {
      try {
        warehouse = Files.createTempDirectory("eigenmill-lake-");
        warehouse.toFile().deleteOnExit();
      } catch (IOException e) {
        throw new UncheckedIOException(e);
      }
    }
    return warehouse;
  }

  /** A namespace no other test of this JVM uses, e.g. {@code lake.t7}. */
  public static String freshNamespace() {
    return NAME + ".t" + NEXT.incrementAndGet();
  }
}
