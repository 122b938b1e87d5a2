package io.eigenmill.testing;

import java.io.File;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.concurrent.TimeUnit;
import java.util.function.BooleanSupplier;
import java.util.stream.Stream;
import org.junit.jupiter.api.extension.ExtensionContext;

/**
 * A standalone Spark cluster on loopback for the tests, run by the product's own script {@code local-demo/cluster}
 * (start, submit, stop): one master and two workers with 1 core and 1536 MiB each, every one its own JVM. Jobs are
 * submitted through Spark's submit entry point in client mode, so the driver is a separate JVM this class can kill.
 *
 * <p>The cluster runs on the Spark jars of the test classpath (test-only libraries and Typesafe Config left out) and
 * the application jar {@link ThinJar} assembles; state lives in {@code cluster-test/} of the build directory
 * ({@link BuildDir}: each Spark line has its own). It is stopped by {@link #close} at the end of the test run, by a
 * shutdown hook if the JVM exits first, and by the script's watchdog if this JVM dies without running hooks. Every
 * wait is bounded.
 */
public final class LoopbackCluster implements ExtensionContext.Store.CloseableResource {
  public static final Duration START_LIMIT = Duration.ofSeconds(240);
  public static final Duration STOP_LIMIT = Duration.ofSeconds(90);

  /** Path fragments of test-only jars: never on a real cluster, so not on this one either. */
  private static final List<String> TEST_ONLY = List.of("/org/junit/", "/junit/junit/", "/org/opentest4j/",
      "/org/apiguardian/", "/org/hamcrest/", "/org/scalatest/", "/org/scalatestplus/", "/org/scalactic/",
      "/org/scalacheck/", "/org/scala-sbt/test-interface/", "/com/holdenkarau/", "/org/apache/hive/hive-common/",
      "/org/ejml/", "/org/apache/maven/surefire/", "/com/typesafe/config/");

  private static final String QUICK_JVM = "-XX:+UseSerialGC -XX:TieredStopAtLevel=1";

  private final Path repo;
  private final Path base;
  private final Path state;
  private final Path sparkHome;
  private final Path jar;
  private final Thread hook;

  private LoopbackCluster(Path repo) {
    this.repo = repo;
    this.base = BuildDir.resolve("cluster-test");
    this.state = base.resolve("state");
    this.sparkHome = base.resolve("spark-home");
    this.jar = base.resolve("eigenmill-tests.jar");
    this.hook = new Thread(this::stopQuietly, "eigenmill-cluster-stop");
  }

  /** Starts a cluster (stopping one a previous run may have left in the same state folder). */
  public static LoopbackCluster start() {
    LoopbackCluster c = new LoopbackCluster(Path.of(System.getProperty("eigenmill.repo", ".")).toAbsolutePath());
    c.doStart();
    return c;
  }

  private void doStart() {
    ThinJar.assemble(BuildDir.resolve("classes"), jar);
    deleteTree(sparkHome);
    deleteTree(base.resolve("logs"));
    script(Duration.ofSeconds(60), "stop");
    Runtime.getRuntime().addShutdownHook(hook);
    Result r = script(START_LIMIT, "start");
    if (r.code() != 0) {
      stopQuietly();
      throw new IllegalStateException("local-demo/cluster start failed (exit " + r.code() + "):\n" + r.output()
          + "\nmaster log:\n" + read(state.resolve("master.log")));
    }
  }

  /** The application jar submitted to the cluster. */
  public Path jar() {
    return jar;
  }

  public Path stateDir() {
    return state;
  }

  public Path repo() {
    return repo;
  }

  /**
   * Submits {@code local-demo/cluster submit ARGS} as a child process whose stdout and stderr go to {@code
   * target/cluster-test/logs/NAME.out} and {@code .err} (kept after the run for a look). The script replaces itself
   * with the driver JVM, so the child is the driver.
   */
  public Submission submit(String name, List<String> args) {
    List<String> cmd = new ArrayList<>(List.of("bash", repo.resolve("local-demo/cluster").toString(), "submit"));
    cmd.addAll(args);
    ProcessBuilder pb = new ProcessBuilder(cmd).directory(repo.toFile());
    environment(pb.environment());
    Path logs = base.resolve("logs");
    Path out = logs.resolve(name + ".out");
    Path err = logs.resolve(name + ".err");
    List<Path> appsBefore = appDirs();
    try {
      Files.createDirectories(logs);
      pb.redirectOutput(out.toFile()).redirectError(err.toFile());
      return new Submission(pb.start(), out, err, appsBefore, this);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot start " + cmd, e);
    }
  }

  /** Every application work folder of every worker ({@code work-N/app-ID}). */
  public List<Path> appDirs() {
    List<Path> out = new ArrayList<>();
    try (Stream<Path> workers = Files.list(state)) {
      for (Path w : workers.filter(p -> p.getFileName().toString().startsWith("work-")).toList()) {
        try (Stream<Path> apps = Files.list(w)) {
          apps.filter(p -> p.getFileName().toString().startsWith("app-")).forEach(out::add);
        }
      }
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    return out;
  }

  /** The executor JVMs the workers run for application {@code appId}, found as children of the worker pids. */
  public List<ProcessHandle> executors(String appId) {
    List<ProcessHandle> out = new ArrayList<>();
    for (long worker : workerPids()) {
      ProcessHandle.of(worker).ifPresent(w -> w.children()
          .filter(c -> c.info().commandLine().orElse("").contains("CoarseGrainedExecutorBackend"))
          .filter(c -> c.info().commandLine().orElse("").contains(appId))
          .forEach(out::add));
    }
    return out;
  }

  public List<Long> workerPids() {
    List<Long> pids = new ArrayList<>();
    try (Stream<Path> files = Files.list(state)) {
      for (Path f : files.filter(p -> p.getFileName().toString().matches("worker-\\d+\\.pid")).sorted().toList()) {
        pids.add(Long.parseLong(Files.readString(f).trim()));
      }
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    return pids;
  }

  /** Logs of the master and the workers. */
  public List<Path> daemonLogs() {
    try (Stream<Path> files = Files.list(state)) {
      return files.filter(p -> p.getFileName().toString().endsWith(".log")).sorted().toList();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  @Override
  public void close() {
    try {
      Result r = script(STOP_LIMIT, "stop");
      if (r.code() != 0) {
        throw new IllegalStateException("local-demo/cluster stop failed:\n" + r.output());
      }
    } finally {
      try {
        Runtime.getRuntime().removeShutdownHook(hook);
      } catch (IllegalStateException shuttingDown) {
        // the hook is running or has run: nothing left to remove
      }
    }
  }

  private void stopQuietly() {
    try {
      script(STOP_LIMIT, "stop");
    } catch (RuntimeException e) {
      System.err.println("eigenmill tests: could not stop the loopback cluster: " + e);
    }
  }

  private void environment(Map<String, String> env) {
    env.put("EIGENMILL_CLUSTER_DIR", state.toString());
    env.put("EIGENMILL_SPARK_HOME", sparkHome.toString());
    // the Spark line of this suite: its JVM flags and its Scala version for the cluster's JVMs
    env.put("EIGENMILL_SPARK", BuildDir.sparkLine());
    env.put("EIGENMILL_SPARK_CLASSPATH", sparkClasspath());
    env.put("EIGENMILL_JAR", jar.toString());
    env.put("EIGENMILL_WORKERS", "2");
    env.put("EIGENMILL_WORKER_MEMORY", "1536m");
    env.put("EIGENMILL_EXECUTOR_MEMORY", "1g");
    env.put("EIGENMILL_DRIVER_MEMORY", "1g");
    env.put("EIGENMILL_CLUSTER_WATCH_PID", Long.toString(ProcessHandle.current().pid()));
    env.put("JAVA_HOME", System.getProperty("java.home"));
    // Short-lived JVMs on small data: the client compiler and a serial GC halve a job's wall time on two cores.
    env.put("JAVA_OPTS", QUICK_JVM);
    env.put("EIGENMILL_EXECUTOR_JAVA_OPTS", QUICK_JVM);
  }

  /** The jars of the test classpath that a Spark installation would have. */
  public static String sparkClasspath() {
    List<String> jars = new ArrayList<>();
    for (String entry : System.getProperty("java.class.path").split(File.pathSeparator)) {
      String unix = entry.replace('\\', '/');
      if (unix.endsWith(".jar") && TEST_ONLY.stream().noneMatch(unix::contains)) {
        jars.add(entry);
      }
    }
    return String.join(File.pathSeparator, jars);
  }

  public record Result(int code, String output) {}

  private Result script(Duration limit, String... args) {
    List<String> cmd = new ArrayList<>(List.of("bash", repo.resolve("local-demo/cluster").toString()));
    cmd.addAll(List.of(args));
    ProcessBuilder pb = new ProcessBuilder(cmd).directory(repo.toFile()).redirectErrorStream(true);
    environment(pb.environment());
    try {
      Files.createDirectories(base);
      Path log = base.resolve("script-" + args[0] + ".log");
      pb.redirectOutput(log.toFile());
      Process p = pb.start();
      if (!p.waitFor(limit.toSeconds(), TimeUnit.SECONDS)) {
        p.destroyForcibly().waitFor(10, TimeUnit.SECONDS);
        return new Result(-1, "timed out after " + limit + "\n" + read(log));
      }
      return new Result(p.exitValue(), read(log));
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted", e);
    }
  }

  public static String read(Path p) {
    try {
      return Files.exists(p) ? Files.readString(p, StandardCharsets.UTF_8) : "(no " + p + ")";
    } catch (IOException e) {
      return "(unreadable " + p + ": " + e + ")";
    }
  }

  /** Deletes a folder tree without following symbolic links (the Spark home's jars are links into ~/.m2). */
  public static void deleteTree(Path root) {
    if (!Files.exists(root, java.nio.file.LinkOption.NOFOLLOW_LINKS)) {
      return;
    }
    try (Stream<Path> walk = Files.walk(root)) {
      for (Path p : walk.sorted(Comparator.reverseOrder()).toList()) {
        Files.delete(p);
      }
    } catch (IOException e) {
      throw new UncheckedIOException("cannot delete " + root, e);
    }
  }

  /** Polls {@code condition} every 20 ms for at most {@code limit}; false when it never held. */
  public static boolean poll(Duration limit, BooleanSupplier condition) {
    long deadline = System.nanoTime() + limit.toNanos();
    while (System.nanoTime() < deadline) {
      if (condition.getAsBoolean()) {
        return true;
      }
      try {
        Thread.sleep(20);
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        return false;
      }
    }
    return condition.getAsBoolean();
  }

  /** A submitted job: the driver JVM and its output files. Closing it kills the driver if it still runs. */
  public static final class Submission implements AutoCloseable {
    private final Process driver;
    private final Path out;
    private final Path err;
    private final List<Path> appsBefore;
    private final LoopbackCluster cluster;

    Submission(Process driver, Path out, Path err, List<Path> appsBefore, LoopbackCluster cluster) {
      this.driver = driver;
      this.out = out;
      this.err = err;
      this.appsBefore = appsBefore;
      this.cluster = cluster;
    }

    public Process driver() {
      return driver;
    }

    public String stdout() {
      return read(out);
    }

    public String stderr() {
      return read(err);
    }

    public List<Path> files() {
      return List.of(out, err);
    }

    /** Waits for the driver to exit; kills it and fails when it runs longer than {@code limit}. */
    public int awaitExit(Duration limit) {
      try {
        if (!driver.waitFor(limit.toSeconds(), TimeUnit.SECONDS)) {
          driver.destroyForcibly().waitFor(10, TimeUnit.SECONDS);
          throw new AssertionError("the submitted job did not finish within " + limit + "; stderr:\n" + stderr());
        }
        return driver.exitValue();
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        throw new IllegalStateException("interrupted", e);
      }
    }

    /** SIGKILL to the driver JVM, as a crash or an OOM kill would; waits (bounded) until it is gone. */
    public void kill() {
      driver.destroyForcibly();
      try {
        if (!driver.waitFor(30, TimeUnit.SECONDS)) {
          throw new AssertionError("the driver JVM " + driver.pid() + " survived SIGKILL for 30 s");
        }
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
      }
    }

    /** The application's work folder on some worker, once the master has given it executors. */
    public Optional<String> appId() {
      return cluster.appDirs().stream().filter(p -> !appsBefore.contains(p))
          .map(p -> p.getFileName().toString()).findFirst();
    }

    /** The {@code stderr} and {@code stdout} files of this application's executors, on every worker. */
    public List<Path> executorLogs(String... names) {
      List<Path> logs = new ArrayList<>();
      Optional<String> app = appId();
      if (app.isEmpty()) {
        return logs;
      }
      for (Path dir : cluster.appDirs()) {
        if (!dir.getFileName().toString().equals(app.get())) {
          continue;
        }
        try (Stream<Path> executors = Files.list(dir)) {
          for (Path e : executors.sorted().toList()) {
            for (String name : names.length == 0 ? new String[] {"stderr", "stdout"} : names) {
              if (Files.exists(e.resolve(name))) {
                logs.add(e.resolve(name));
              }
            }
          }
        } catch (IOException e) {
          throw new UncheckedIOException(e);
        }
      }
      return logs;
    }

    @Override
    public void close() {
      if (driver.isAlive()) {
        kill();
      }
    }
  }
}
