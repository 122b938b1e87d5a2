package io.eigenmill.testing;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * The open reference datasets (src/test/resources/datasets, copied from the project's shared datasets with their
 * README): the CSV and the JSON of reference values computed by R 4.2.2 and numpy/scikit-learn, cross-checked with
 * 50-digit mpmath.
 */
public final class Datasets {
  private Datasets() {}

  public static Path csv(String name) {
    try {
      Path dir = Files.createTempDirectory("eigenmill-ds-");
      Path out = dir.resolve(name + ".csv");
      try (InputStream in = Datasets.class.getResourceAsStream("/datasets/" + name + ".csv")) {
        Files.copy(in, out);
      }
      return out;
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  public static JsonNode reference(String name) {
    try (InputStream in = Datasets.class.getResourceAsStream("/datasets/" + name + ".reference.json")) {
      return new ObjectMapper().readTree(in);
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  public static double[] doubles(JsonNode array) {
    double[] out = new double[array.size()];
    for (int i = 0; i < out.length; i++) {
      out[i] = array.get(i).asDouble();
    }
    return out;
  }

  public static double[][] matrix(JsonNode rows) {
    double[][] out = new double[rows.size()][];
    for (int i = 0; i < out.length; i++) {
      out[i] = doubles(rows.get(i));
    }
    return out;
  }

  public static List<String> strings(JsonNode array) {
    List<String> out = new ArrayList<>();
    array.forEach(n -> out.add(n.asText()));
    return out;
  }
}
