package io.eigenmill.bench;

import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.util.List;

/**
 * The job settings the benchmark runs with, built from HOCON text through the product's own settings reader (so
 * every default comes from reference.conf and every value is validated as a user's would be).
 */
final class BenchJobs {
  /** Components kept by every fit. */
  static final int COMPONENTS = 10;
  static final int CLUSTERS = 8;
  static final int CLUSTER_ITERATIONS = 10;
  static final long CLUSTER_SEED = 1;

  private BenchJobs() {}

  /**
   * A fit with {@code method}, k = 10, standardize. {@code columns} empty means every numeric column that is not a
   * key (the planner resolves them); otherwise the explicit feature list.
   */
  static JobSettings fit(BenchTable table, List<String> columns, String method, String outputPath) {
    return read(fitName(method), fitHocon(table, columns, method, outputPath));
  }

  /** The name of {@link #fit}'s job. */
  static String fitName(String method) {
    return "bench-fit-" + method;
  }

  /** The settings of {@link #fit} as HOCON, without the job's name (a job file adds it). */
  static String fitHocon(BenchTable table, List<String> columns, String method, String outputPath) {
    return String.join("\n",
        "input.path = " + quote(table.path()),
        "features.columns = " + list(columns),
        "features.keys = " + list(table.keys()),
        "prepare.scaling = standardize",
        "reduce.method = " + method,
        "reduce.components = " + COMPONENTS,
        "output.path = " + quote(outputPath));
  }

  /** An apply run of the model at {@code modelPath}: scores written under {@code outputPath} (overwritten). */
  static JobSettings apply(BenchTable table, String modelPath, String outputPath) {
    return read("bench-apply", String.join("\n",
        "input.path = " + quote(table.path()),
        "features.keys = " + list(table.keys()),
        "apply.model = " + quote(modelPath),
        "output.path = " + quote(outputPath),
        "output.mode = overwrite"));
  }

  /**
   * The clustering settings: k = 8, 10 iterations, seed 1, and the product's default number of restarts (they run
   * side by side in the same passes over the points, so they add no pass).
   */
  static JobSettings.Cluster cluster(BenchTable table, String outputPath) {
    return read("bench-kmeans", String.join("\n",
        "input.path = " + quote(table.path()),
        "output.path = " + quote(outputPath),
        "cluster.enabled = true",
        "cluster.k = " + CLUSTERS,
        "cluster.max-iterations = " + CLUSTER_ITERATIONS,
        "cluster.seed = " + CLUSTER_SEED)).cluster();
  }

  private static JobSettings read(String name, String hocon) {
    return new SettingsReader().readString("name = " + quote(name) + "\n" + hocon, List.of(), name);
  }

  static String list(List<String> values) {
    StringBuilder s = new StringBuilder("[");
    for (int i = 0; i < values.size(); i++) {
      s.append(i == 0 ? "" : ", ").append(quote(values.get(i)));
    }
    return s.append(']').toString();
  }

  /** A HOCON quoted string (JSON escaping). */
  static String quote(String text) {
    StringBuilder s = new StringBuilder("\"");
    for (char c : text.toCharArray()) {
      switch (c) {
        case '"' -> s.append("\\\"");
        case '\\' -> s.append("\\\\");
        case '\n' -> s.append("\\n");
        default -> s.append(c);
      }
    }
    return s.append('"').toString();
  }
}
