package io.eigenmill.testing;

import io.eigenmill.cli.Main;
import java.io.File;
import java.util.ArrayList;
import java.util.List;

/** The command line in a JVM of its own: the test classpath, the line's JVM flags, local[1] Spark, 1 GiB heap. */
public final class ChildJvm {
  private ChildJvm() {}

  /**
   * The command that runs {@link Main} with {@code args}, then {@code --env conf/local.conf} and
   * {@code --set spark.master=local[1]} (a mutable list: callers may add or cut).
   */
  public static List<String> command(String... args) {
    String repo = System.getProperty("eigenmill.repo", ".");
    List<String> cmd = new ArrayList<>(List.of(new File(System.getProperty("java.home"), "bin/java").getPath(),
        "-Xmx1g"));
    cmd.addAll(List.of(System.getProperty("eigenmill.jvm.opens", "").split(" ")));
    cmd.removeIf(String::isBlank);
    cmd.addAll(List.of("-Dlog4j2.configurationFile=" + repo + "/conf/log4j2.properties", "-cp",
        System.getProperty("java.class.path"), Main.class.getName()));
    cmd.addAll(List.of(args));
    cmd.addAll(List.of("--env", repo + "/conf/local.conf", "--set", "spark.master=local[1]"));
    return cmd;
  }
}
