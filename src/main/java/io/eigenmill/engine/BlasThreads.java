package io.eigenmill.engine;

import io.eigenmill.math.Linalg;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.apache.spark.sql.SparkSession;

/**
 * Whether native OpenBLAS would run its own threads inside Spark's tasks, in a local-mode session, and the warning a
 * run gives then.
 *
 * <p>Why: Spark already runs one task per core, and every task calls BLAS. OpenBLAS's threaded builds start up to
 * one thread per core for each large enough call unless {@code OPENBLAS_NUM_THREADS} (or {@code GOTO_NUM_THREADS},
 * then {@code OMP_NUM_THREADS}) says otherwise, read once when the library loads; the tasks' BLAS threads then
 * compete with the other tasks for the same cores. The command line's launcher sets the variable to 1 for itself,
 * and its sessions set {@code spark.executorEnv.OPENBLAS_NUM_THREADS = 1} for cluster executors; a program that runs
 * jobs through the Java API in its own JVM (a test suite, a pipeline) gets no such setting, and the JVM cannot change
 * its own environment once started. So the run says so instead. Cluster executors are not checked: their
 * environment is the cluster's (see README, Native BLAS).
 */
public final class BlasThreads {
  private BlasThreads() {}

  /**
   * The variables a threaded OpenBLAS reads for its thread count, first set first: a pthreads build reads
   * {@code OPENBLAS_NUM_THREADS}, then {@code GOTO_NUM_THREADS}, then {@code OMP_NUM_THREADS}; an OpenMP build (its
   * path names openmp) reads {@code OMP_NUM_THREADS} only. (OpenBLAS's documentation of its environment variables.)
   */
  static List<String> variables(String library) {
    return library.toLowerCase(Locale.ROOT).contains("openmp") ? List.of("OMP_NUM_THREADS")
        : List.of("OPENBLAS_NUM_THREADS", "GOTO_NUM_THREADS", "OMP_NUM_THREADS");
  }

  /** The warning for this session's JVM, or null (not local mode, one task slot, pure-Java BLAS, or one thread). */
  public static String warning(SparkSession spark) {
    if (!spark.sparkContext().isLocal() || !Linalg.isNative()) {
      return null;
    }
    String maps;
    try {
      maps = Files.readString(Path.of("/proc/self/maps"));
    } catch (IOException | RuntimeException e) {
      return null;
    }
    return warning(maps, System.getenv(), spark.sparkContext().defaultParallelism());
  }

  /**
   * The warning for a JVM whose loaded libraries are listed in {@code maps} (the format of /proc/self/maps: the path
   * last on a line), with environment {@code env} and {@code slots} tasks at once; null when no threaded OpenBLAS is
   * loaded, when at most one task runs at once, or when the first of its {@link #variables} that is set is 1.
   */
  static String warning(String maps, Map<String, String> env, int slots) {
    String library = threadedOpenBlas(maps);
    if (library == null || slots < 2) {
      return null;
    }
    List<String> names = variables(library);
    String set = names.get(0) + "=1";
    for (String v : names) {
      String value = env.get(v);
      if (value != null && !value.isBlank()) {
        if (value.trim().equals("1")) {
          return null;
        }
        return String.format(Locale.ROOT, "native BLAS: OpenBLAS (%s) runs with %s = %s, so each of the %d Spark"
            + " tasks that run at once can start several BLAS threads on cores the other tasks use; set %s in the"
            + " environment of this JVM (the command line's launcher does)", library, v, value.trim(), slots, set);
      }
    }
    return String.format(Locale.ROOT, "native BLAS: OpenBLAS (%s) runs with %s unset, so each of the %d Spark tasks"
        + " that run at once can start one BLAS thread per core, on cores the other tasks use; set %s in the"
        + " environment of this JVM (the command line's launcher does)", library, String.join(", ", names), slots,
        set);
  }

  /**
   * The path of a loaded OpenBLAS other than its single-threaded build, or null: the library itself (a file named
   * libopenblas...) when listed, else the first file of an OpenBLAS directory (Debian's libblas.so.3 and
   * liblapack.so.3 under openblas-pthread/).
   */
  static String threadedOpenBlas(String maps) {
    String first = null;
    for (String line : maps.split("\n")) {
      int slash = line.indexOf('/');
      if (slash < 0) {
        continue;
      }
      String path = line.substring(slash).trim();
      String lower = path.toLowerCase(Locale.ROOT);
      if (!lower.contains("openblas") || lower.contains("serial")) {
        continue;
      }
      if (lower.substring(lower.lastIndexOf('/') + 1).startsWith("libopenblas")) {
        return path;
      }
      first = first == null ? path : first;
    }
    return first;
  }
}
