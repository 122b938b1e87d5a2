package io.eigenmill.bench;

import io.eigenmill.cli.Sessions;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.io.File;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import org.apache.spark.ml.feature.PCAModel;
import org.apache.spark.sql.SparkSession;

/**
 * The child processes of {@link ProcessRun} other than the fit (which is the command line itself). Each reads the
 * job file over the environment profile and opens the Spark session exactly as the command line does
 * ({@link SettingsReader#read(File, List, File)}, then {@link Sessions#open}), does its case, stops the session as
 * the command line does and exits: 0 done, 1 failure, 2 bad arguments.
 *
 * <p>Arguments: {@code CASE JOB.conf PROFILE.conf TABLE SPLIT_BYTES FEATURE...}, where CASE is
 * <ul>
 *   <li>{@value #START_ONLY}: nothing between opening and stopping the session (the start-up every case pays);
 *   <li>{@value #READ_ONLY}: the read floor ({@link Floors#readFloor}) of the features of the Parquet folder TABLE,
 *       in splits of SPLIT_BYTES (0: Spark's own); prints the rows read and the column sums;
 *   <li>{@value #BUILTIN_PCA}: the engine's PCA as the builtin-pca case runs it ({@link MainCases#enginePca}) on
 *       TABLE; prints the explained variance;
 *   <li>{@value #BUILTIN_PCA_NO_CODEGEN}: the same with {@code spark.sql.codegen.wholeStage = false} for the session
 *       (the engine's PCA spends most of its task time in the code generated for the stage that assembles its
 *       vectors from 100 columns: 68 s against 38 s with it off, one process each on 2 cores).
 * </ul>
 */
public final class ProcessCases {
  static final String START_ONLY = "start-only";
  static final String READ_ONLY = "read-only";
  static final String BUILTIN_PCA = "builtin-pca";
  /** As {@link #BUILTIN_PCA}, with Spark's whole-stage code generation off for the session. */
  static final String BUILTIN_PCA_NO_CODEGEN = "builtin-pca-no-codegen";
  /** The line read-only prints first: this prefix, then the rows read. */
  static final String ROWS_READ = "rows read: ";
  static final String USAGE = "usage: ProcessCases start-only|read-only|builtin-pca|builtin-pca-no-codegen JOB.conf "
      + "PROFILE.conf TABLE SPLIT_BYTES FEATURE...";

  private ProcessCases() {}

  public static void main(String[] args) {
    int code = 0;
    try {
      run(args);
    } catch (IllegalArgumentException e) {
      System.err.println("process case: " + e.getMessage());
      System.err.println(USAGE);
      code = 2;
    } catch (Exception | Error e) {
      System.err.println("process case: failed: " + e);
      e.printStackTrace(System.err);
      code = 1;
    }
    // as the command line ends: Spark's non-daemon threads must not keep the process alive
    System.exit(code);
  }

  private static void run(String[] args) {
    if (args.length < 5 || !List.of(START_ONLY, READ_ONLY, BUILTIN_PCA, BUILTIN_PCA_NO_CODEGEN).contains(args[0])) {
      throw new IllegalArgumentException(args.length == 0 ? "no case given" : "bad arguments " + List.of(args));
    }
    String which = args[0];
    JobSettings settings = new SettingsReader().read(new File(args[1]), List.of(), new File(args[2]));
    String table = args[3];
    long splitBytes = Long.parseLong(args[4]);
    List<String> features = List.of(args).subList(5, args.length);
    SparkSession spark = Sessions.open(settings);
    try {
      switch (which) {
        case READ_ONLY -> {
          double[] sums = Floors.readFloor(spark.read().parquet(table), features, splitBytes);
          System.out.printf(Locale.ROOT, "%s%d%n", ROWS_READ, (long) sums[features.size()]);
          System.out.println("column sums: " + Arrays.toString(Arrays.copyOf(sums, features.size())));
        }
        case BUILTIN_PCA, BUILTIN_PCA_NO_CODEGEN -> {
          if (which.equals(BUILTIN_PCA_NO_CODEGEN)) {
            spark.conf().set("spark.sql.codegen.wholeStage", "false");
          }
          PCAModel model = MainCases.enginePca(spark.read().parquet(table), features);
          System.out.println("explained variance: " + model.explainedVariance());
        }
        default -> {
          // start-only: the session alone
        }
      }
    } finally {
      Sessions.closeIfOwned(spark);
    }
  }
}
