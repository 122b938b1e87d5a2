package io.eigenmill.testing;

import java.nio.file.Path;

/**
 * Where the build of the Spark line under test lives: {@code target/} for the 3.5 line, {@code target-spark4/} for
 * the 4.x line (surefire's {@code eigenmill.build}); the compiled product classes are in its {@code classes/}.
 */
public final class BuildDir {
  private BuildDir() {}

  /** The build directory (absolute). */
  public static Path path() {
    String build = System.getProperty("eigenmill.build");
    Path dir = build != null ? Path.of(build) : Path.of(System.getProperty("eigenmill.repo", "."), "target");
    return dir.toAbsolutePath();
  }

  /** {@code name} inside the build directory. */
  public static Path resolve(String name) {
    return path().resolve(name);
  }

  /** The Spark line the suite runs on: {@code 3.5} or {@code 4} (surefire's {@code eigenmill.spark.line}). */
  public static String sparkLine() {
    return System.getProperty("eigenmill.spark.line", "3.5");
  }
}
