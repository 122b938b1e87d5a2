package io.eigenmill.cli;

import io.eigenmill.Version;
import io.eigenmill.jobs.JobRunner;
import io.eigenmill.jobs.RunResult;
import io.eigenmill.math.Linalg;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.io.File;
import java.io.PrintStream;
import java.util.ArrayList;
import java.util.List;
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

  /** Runs the command and returns its exit code (never calls System.exit; tests use this). */
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
      out.println("eigenmill " + Version.current() + " (" + Linalg.describe() + ")");
      return OK;
    }
    SparkSession spark = null;
    try {
      JobSettings settings = new SettingsReader().read(a.jobFile(), a.sets(), a.envFile());
      spark = Sessions.open(settings);
      if (a.command().equals("plan")) {
        JobPlan plan = JobRunner.plan(spark, settings);
        out.print(plan.describe());
        out.println("plan is valid; nothing was computed (" + Linalg.describe() + ")");
        return OK;
      }
      RunResult result = JobRunner.run(spark, settings);
      out.println(Outcome.describe(result));
      return OK;
    } catch (InvalidJobException e) {
      for (String problem : e.problems()) {
        err.println("eigenmill: error: " + problem);
      }
      return INVALID;
    } catch (RuntimeException | Error e) {
      InvalidJobException cause = Sessions.userError(e);
      if (cause != null) {
        for (String problem : cause.problems()) {
          err.println("eigenmill: error: " + problem);
        }
        return INVALID;
      }
      err.println("eigenmill: failed: " + e);
      e.printStackTrace(err);
      return FAILED;
    } finally {
      Sessions.closeIfOwned(spark);
    }
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
