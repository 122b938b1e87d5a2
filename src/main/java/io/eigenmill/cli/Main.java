package io.eigenmill.cli;

import io.eigenmill.Version;
import io.eigenmill.io.InputFiles;
import io.eigenmill.math.Linalg;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.io.File;
import java.io.PrintStream;
import java.io.PrintWriter;
import java.io.StringWriter;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import org.apache.spark.sql.SparkSession;

/**
 * The command line: {@code plan JOB.conf} and {@code run JOB.conf}, each with {@code --set key=value} (repeatable)
 * and {@code --env PROFILE.conf}. The local runner script and spark-submit both call this class. Exit codes: 0 done,
 * 2 bad settings or input (every problem printed), 1 failure while running.
 */
public final class Main {
  public static final int OK = 0;
  public static final int FAILED = 1;
  public static final int INVALID = 2;

  private Main() {}

  public static void main(String[] args) {
    int code = run(args, System.out, System.err);
    System.exit(code);
  }

  /**
   * Runs the command and returns its exit code (never calls System.exit; tests use this). Everything printed goes
   * through {@link Redaction#scrub}: the values of secret keys given with {@code --set} or under {@code spark.conf}
   * never appear in the output, not even inside an error message or a stack trace.
   */
  public static int run(String[] args, PrintStream out, PrintStream err) {
    Arguments a;
    try {
      a = Arguments.parse(args);
    } catch (IllegalArgumentException e) {
      err.println("eigenmill: " + e.getMessage());
      err.println(Arguments.USAGE);
      return INVALID;
    }
    if (a.command().equals("version")) {
      out.println("eigenmill " + Version.current() + " (" + Linalg.describe() + "; nearest-centroid kernel "
          + io.eigenmill.kmeans.math.NearestKeys.best().describe() + "; column copy "
          + io.eigenmill.math.ShiftedCopy.best().describe() + ")");
      out.println(sparkVersions());
      out.print(jvmFlags(Version.jvmFlags()));
      return OK;
    }
    Set<String> secrets = new LinkedHashSet<>(Redaction.secretValuesOfSets(a.sets()));
    SparkSession spark = null;
    try {
      long reading = System.nanoTime();
      JobSettings settings = new SettingsReader().read(a.jobFile(), a.sets(), a.envFile());
      secrets.addAll(Redaction.secretValues(settings.spark().conf()));
      long starting = System.nanoTime();
      spark = Sessions.open(settings);
      // the run's timings start with these two: the settings read and checked, and Spark started (or joined)
      java.util.Map<String, Double> before = new java.util.LinkedHashMap<>();
      before.put("settings", (starting - reading) / 1e9);
      before.put("spark-start", (System.nanoTime() - starting) / 1e9);
      if (a.command().equals("plan")) {
        InputFiles.Check input = settings.input().fromSnapshots() ? null : InputFiles.check(spark, settings.input());
        if (input != null && !input.skipWarning().isEmpty()) {
          out.println(Redaction.scrub("warning: " + input.skipWarning(), secrets));
        }
        JobPlan plan = JobRunner.plan(spark, settings);
        out.print(Redaction.scrub(plan.describe() + sparkLine(settings), secrets));
        out.println("plan is valid; nothing was computed" + (plan.longInput() != null && plan.longInput().discovered()
            ? " but the metric names (one read of column " + plan.longInput().layout().metric() + ")" : "") + " ("
            + Linalg.describe() + ")");
        return OK;
      }
      RunResult result = JobRunner.run(spark, settings, before);
      out.println(Redaction.scrub(Outcome.describe(result), secrets));
      return OK;
    } catch (InvalidJobException e) {
      printProblems(e, err, secrets);
      return INVALID;
    } catch (Exception | Error e) {
      // Exception, not only RuntimeException: Spark's AnalysisException is a checked exception thrown from Scala
      InvalidJobException cause = Sessions.userError(e);
      if (cause != null) {
        printProblems(cause, err, secrets);
        return INVALID;
      }
      StringWriter trace = new StringWriter();
      e.printStackTrace(new PrintWriter(trace));
      err.println(Redaction.scrub("eigenmill: failed: " + e, secrets));
      err.print(Redaction.scrub(trace.toString(), secrets));
      return FAILED;
    } finally {
      Sessions.closeIfOwned(spark);
    }
  }

  private static void printProblems(InvalidJobException e, PrintStream err, Set<String> secrets) {
    for (String problem : e.problems()) {
      err.println(Redaction.scrub("eigenmill: error: " + problem, secrets));
    }
  }

  /**
   * The lines {@code version} prints after the first: the JVM flags for driver and executors ({@code flags}, from
   * pom.xml's {@code spark.jvm.opens}) as spark-submit options one can paste, each on its own line.
   */
  /**
   * The line {@code version} prints second: the Spark and Scala this process runs on and the line the build is for
   * (its jar's Scala suffix), e.g. {@code Spark 3.5.9, Scala 2.12.18 (built for the Spark 3.5 line:
   * eigenmill_2.12)}.
   */
  static String sparkVersions() {
    return "Running on " + Version.runtime() + " (built for the Spark " + Version.builtLine() + " line against "
        + Version.builtSpark() + ": eigenmill_" + Version.builtScala() + ")";
  }

  static String jvmFlags(String flags) {
    if (flags.isEmpty()) {
      return "JVM flags: unknown (this build did not record pom.xml's spark.jvm.opens)\n";
    }
    return "JVM flags for driver and executors (Java 17: Spark's module openings, the SIMD vector module);"
        + " spark-submit options:\n"
        + "  --driver-java-options \"" + flags + "\"\n"
        + "  --conf \"spark.executor.extraJavaOptions=" + flags + "\"\n";
  }

  /** The Spark settings of the job as one plan line, secret values masked. */
  static String sparkLine(JobSettings settings) {
    Map<String, String> conf = Redaction.redact(settings.spark().conf());
    List<String> parts = new ArrayList<>();
    conf.forEach((k, v) -> parts.add(k + " = " + v));
    return String.format(Locale.ROOT, "%-16s %s%n", "spark.conf:", parts.isEmpty() ? "(none)"
        : String.join(", ", parts));
  }

  /** Parsed command-line arguments. */
  record Arguments(String command, File jobFile, List<String> sets, File envFile) {
    static final String USAGE = "usage: eigenmill plan|run JOB.conf [--set key=value]... [--env PROFILE.conf]\n"
        + "       eigenmill version";

    static Arguments parse(String[] args) {
      if (args.length == 0) {
        throw new IllegalArgumentException("no command given");
      }
      String command = args[0];
      if (command.equals("version")) {
        return new Arguments(command, null, List.of(), null);
      }
      if (!command.equals("plan") && !command.equals("run")) {
        throw new IllegalArgumentException("unknown command '" + command + "' (expected plan, run or version)");
      }
      File job = null;
      File env = null;
      List<String> sets = new ArrayList<>();
      for (int i = 1; i < args.length; i++) {
        String arg = args[i];
        if (arg.equals("--set") || arg.equals("--env")) {
          if (i + 1 >= args.length) {
            throw new IllegalArgumentException(arg + " needs a value");
          }
          String value = args[++i];
          if (arg.equals("--set")) {
            sets.add(value);
          } else {
            env = new File(value);
          }
        } else if (arg.startsWith("--set=")) {
          sets.add(arg.substring("--set=".length()));
        } else if (arg.startsWith("-")) {
          throw new IllegalArgumentException("unknown option " + arg);
        } else if (job == null) {
          job = new File(arg);
        } else {
          throw new IllegalArgumentException("more than one job file: " + job + " and " + arg);
        }
      }
      if (job == null) {
        throw new IllegalArgumentException(command + " needs a job file");
      }
      return new Arguments(command, job, List.copyOf(sets), env);
    }
  }
}
