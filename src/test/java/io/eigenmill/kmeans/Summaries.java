package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import java.util.stream.Stream;

/** Reads {@code summary.json} files and compares the numbers of two fits. */
public final class Summaries {
  /**
   * Relative tolerance between two runs of one job: the partial moments merge in a different order on a cluster
   * (shuffle fetch order, retried tasks), which moves the sums by a few ulps; the standardized test tables keep the
   * eigenvalues within a factor of about 1e3 of each other, so 1e-9 leaves a margin of several orders of magnitude.
   */
  public static final double RELATIVE = 1e-9;

  private Summaries() {}

  public static JsonNode read(Path outputDir) {
    try {
      return parse(Files.readAllBytes(outputDir.resolve("summary.json")));
    } catch (IOException e) {
      throw new UncheckedIOException("cannot read " + outputDir.resolve("summary.json"), e);
    }
  }

  public static JsonNode parse(byte[] summaryJson) {
    try {
      return new ObjectMapper().readTree(summaryJson);
    } catch (IOException e) {
      throw new UncheckedIOException("summary.json is not JSON", e);
    }
  }

  /**
   * Asserts that {@code actual} has the numbers of {@code expected}: rows exactly, features, method and components
   * equal, eigenvalues, variance shares, means and total variance within {@link #RELATIVE}. {@code
   * reference} names the run {@code expected} comes from, for the failure message.
   */
  public static void assertSameFit(JsonNode expected, JsonNode actual, String reference) {
    assertEquals(expected.get("rows").asLong(), actual.get("rows").asLong(), "rows, against " + reference);
    assertEquals(expected.get("rows_read").asLong(), actual.get("rows_read").asLong(),
        "rows_read, against " + reference);
    assertEquals(expected.get("features"), actual.get("features"), "features, against " + reference);
    assertEquals(expected.get("method"), actual.get("method"), "method, against " + reference);
    assertEquals(expected.get("components"), actual.get("components"), "components, against " + reference);
    for (String field : List.of("eigenvalues", "variance_share", "means")) {
      JsonNode e = expected.get(field);
      JsonNode a = actual.get(field);
      assertEquals(e.size(), a.size(), field + " length, against " + reference);
      assertTrue(e.size() > 0, field + " is empty in " + reference);
      for (int i = 0; i < e.size(); i++) {
        assertClose(e.get(i).asDouble(), a.get(i).asDouble(), field + "[" + i + "], against " + reference);
      }
    }
    assertClose(expected.get("total_variance").asDouble(), actual.get("total_variance").asDouble(),
        "total_variance, against " + reference);
  }

  public static void assertClose(double expected, double actual, String what) {
    double scale = Math.max(Math.abs(expected), Math.abs(actual));
    assertTrue(Math.abs(expected - actual) <= RELATIVE * scale,
        what + ": expected " + expected + ", got " + actual + " (relative difference "
            + (scale == 0 ? 0 : Math.abs(expected - actual) / scale) + ", allowed " + RELATIVE + ")");
  }

  /** The visible entries of an output folder (tables, summary, marker), without checksum files. */
  public static Set<String> entries(Path outputDir) {
    try (Stream<Path> list = Files.list(outputDir)) {
      Set<String> out = new TreeSet<>();
      list.map(p -> p.getFileName().toString()).filter(n -> !n.startsWith(".")).forEach(out::add);
      return out;
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
