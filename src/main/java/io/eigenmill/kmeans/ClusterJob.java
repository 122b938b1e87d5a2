package io.eigenmill.kmeans;

import io.eigenmill.engine.Stopwatch;
import io.eigenmill.io.DriverTables;
import io.eigenmill.io.PcaModel;
import io.eigenmill.kmeans.ParallelKMeans.Fitted;
import io.eigenmill.kmeans.ParallelKMeans.Run;
import io.eigenmill.math.Moments;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.NumericType;
import org.apache.spark.sql.types.StructType;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Clusters the rows of a points table, or its entities (e.g. hosts), with k-means: k-means|| initialisation, Lloyd
 * iterations, several restarts keeping the lowest within-cluster sum of squares (on a table of at most
 * {@code cluster.init-sample} rows: restarts on the driver until the best is reached by
 * {@code cluster.restarts-at-best} of them, refined by single-point moves), for a fixed k or for every k of a
 * range, choosing k by the silhouette, Calinski-Harabasz or Davies-Bouldin ({@link ParallelKMeans},
 * {@link KChoice}).
 *
 * <p>Points: PCA scores ({@code space = "scores"}) or prepared features ({@code "features"}). With
 * {@code cluster.entity} set, each entity becomes one point: the mean of its rows' coordinates and, with
 * {@code cluster.entity-spread}, their sample standard deviations (0 for a one-row entity) as further dimensions
 * named {@code <column>_sd}; rows with a null or NaN coordinate are left out of the means. Rows (or entities) with a
 * null, NaN or infinite coordinate are left out of the clustering and counted in a warning.
 *
 * <p>Passes: the points are read once into an executor cache of column-major blocks; then 1 summary pass and one
 * pass per Lloyd iteration, each serving every restart of every k at once; k-means|| runs on the driver over the
 * summary's seeded sample (or, with {@code cluster.init-sample = 0}, as 2 rounds and a weights pass over the cache;
 * see {@link ParallelKMeans}); the silhouette is computed on the driver on a seeded sample; writing the assignments
 * reads the points once more. Results do not depend on the partitioning beyond rounding: random decisions are keyed
 * by each point's identity (a hash of its coordinates, or of its entity key), not by its position.
 */
public final class ClusterJob {
  private static final Logger LOG = LoggerFactory.getLogger(ClusterJob.class);

  /** Rows per cached block. */
  static final int BLOCK_ROWS = 1024;

  private final SparkSession spark;
  private final JobSettings.Cluster settings;
  private final Dataset<Row> points;
  private final List<String> keyColumns;
  private final List<String> pointColumns;
  private final PcaModel model;
  private final ClusterSpace space;

  /**
   * @param points the key columns and the numeric point columns
   * @param model the PCA model behind the points, for original units; null when there is none (the point
   *     columns are then the features)
   * @param space scores (pointColumns are the first scores pc_1..pc_p of {@code model}) or features
   *     (pointColumns are the model's features, prepared as (x - mean) / scale, in model order)
   * @param settings validated by the settings reader (k, k-range, restarts, ...) and, for {@code cluster.entity},
   *     by the planner against the input (a key column, not a clustered one); not checked again here
   */
  public ClusterJob(SparkSession spark, JobSettings.Cluster settings, Dataset<Row> points, List<String> keyColumns,
      List<String> pointColumns, PcaModel model, ClusterSpace space) {
    this.spark = spark;
    this.settings = settings;
    this.points = points;
    this.keyColumns = List.copyOf(keyColumns);
    this.pointColumns = List.copyOf(pointColumns);
    this.model = model;
    this.space = space;
  }

  public ClusterOutcome execute() {
    Stopwatch clock = new Stopwatch();
    validate();
    boolean byEntity = !settings.entity().isEmpty();
    Dataset<Row> source = byEntity ? entityTable() : points;
    List<String> dims = dimensions(byEntity);
    List<String> keep = byEntity ? List.of(settings.entity()) : keyColumns;
    int d = dims.size();
    List<Run> runs = runs();
    // without an entity the identity is the hash of the coordinates: a columnar scan of them can serve the cache
    Dataset<Row> coordinates = byEntity ? null
        : source.select(dims.stream().map(c -> functions.col(NearestCentroid.quoted(c))).toArray(Column[]::new));
    JavaRDD<PointBlock> blocks = PointBlocks.cache(source.select(identityAndPoints(byEntity, dims)), coordinates, d,
        BLOCK_ROWS);
    List<String> warnings = new ArrayList<>();
    try {
      ClusterProfiles profiles = new ClusterProfiles(model, space, pointColumns);
      PointSummary summary = ParallelKMeans.summarize(spark, blocks, d, profiles.needsCovariance(),
          settings.silhouetteSample(), settings.initSample(), settings.seed(), runs);
      clock.lap("summary");
      Moments moments = summary.moments();
      checkCounts(summary, byEntity, dims, warnings);
      double[] mean = moments.mean();
      double totalSs = totalSs(moments);
      double radius = Math.sqrt(totalSs / moments.count());
      ParallelKMeans kmeans = new ParallelKMeans(spark, blocks, d, mean, settings.seed(),
          settings.maxIterations(), settings.tolerance())
          .driverRestarts(settings.restarts(), settings.restartsAtBest(), settings.maxRestarts());
      List<Fitted> fitted;
      try {
        fitted = kmeans.fit(runs, summary, radius);
      } catch (ParallelKMeans.TooFewDistinctPoints e) {
        throw tooFew(e.k(), e.distinct() + " distinct", byEntity);
      }
      clock.lap("k-means");
      KChoice choice = KChoice.of(settings, fitted, summary, totalSs, d, kmeans.restartSpread());
      clock.lap("quality");
      warnings.addAll(choice.notes(settings));
      ClusterResult result = profiles.result(choice, summary, space, settings.entity(), dims,
          kmeans.initialisationSample());
      Dataset<Row> assignments = NearestCentroid.assignments(source, keep, dims, result.centroids());
      Dataset<Row> centroids = ClusterTables.centroids(spark, result);
      Dataset<Row> profileTable = ClusterTables.profiles(spark, result);
      Dataset<Row> kSelection = ClusterTables.kSelection(spark, result, choice.bestSizes());
      clock.lap("tables");
      ClusterOutcome outcome = new ClusterOutcome(result, assignments, centroids, profileTable, kSelection,
          List.copyOf(warnings), clock.timings(), kmeans.passes() + 1);
      LOG.info("cluster: k = {} ({}), wcss {}, {} passes", result.k(), result.selectionRule(),
          result.wcss(), outcome.passes());
      return outcome;
    } finally {
      blocks.unpersist(false);
    }
  }

  /** Writes the four tables as Parquet under {@code folder}/assignments, /centroids, /profiles, /k-selection. */
  public static void writeTables(ClusterOutcome o, String folder) {
    o.assignments().write().parquet(folder + "/assignments");
    // the three small tables are written from the driver (no Spark job each)
    DriverTables.write(o.centroids().sparkSession(), o.centroids(), folder + "/centroids");
    DriverTables.write(o.profiles().sparkSession(), o.profiles(), folder + "/profiles");
    DriverTables.write(o.kSelection().sparkSession(), o.kSelection(), folder + "/k-selection");
  }

  private List<Run> runs() {
    List<Run> runs = new ArrayList<>();
    int lo = settings.k().isPresent() ? settings.k().getAsInt() : settings.kMin();
    int hi = settings.k().isPresent() ? lo : settings.kMax();
    for (int k = lo; k <= hi; k++) {
      for (int r = 0; r < settings.restarts(); r++) {
        runs.add(new Run(k, r));
      }
    }
    return runs;
  }

  private List<String> dimensions(boolean byEntity) {
    List<String> dims = new ArrayList<>(pointColumns);
    if (byEntity && settings.entitySpread()) {
      for (String c : pointColumns) {
        dims.add(c + "_sd");
      }
    }
    return dims;
  }

  /** One row per entity: the mean (and with entity-spread the sample sd, 0 for one row) of each point column. */
  private Dataset<Row> entityTable() {
    return entityPoints(points, pointColumns, settings.entity(), settings.entitySpread(), null);
  }

  /**
   * The entity points of {@code points}: one row per value of {@code entity}, with the mean of each point column
   * (named as the column) and, with {@code spread}, its sample standard deviation ({@code <column>_sd}, 0 for a
   * one-row entity), over the entity's rows that have no null or NaN coordinate. The fit clusters these, and an
   * apply job labels them with the fit's centroids. One aggregation (a shuffle of the entities' partial sums).
   *
   * @param count a column to hold each entity's row count, or null for none
   */
  static Dataset<Row> entityPoints(Dataset<Row> points, List<String> pointColumns, String entity, boolean spread,
      String count) {
    List<Column> aggs = new ArrayList<>();
    for (String c : pointColumns) {
      aggs.add(functions.avg(functions.col(NearestCentroid.quoted(c))).as(c));
    }
    if (spread) {
      for (String c : pointColumns) {
        Column sd = functions.stddev_samp(functions.col(NearestCentroid.quoted(c)));
        aggs.add(functions.coalesce(functions.nanvl(sd, functions.lit(0.0)), functions.lit(0.0)).as(c + "_sd"));
      }
    }
    if (count != null) {
      aggs.add(functions.count(functions.lit(1)).as(count));
    }
    Dataset<Row> clean = points.na().drop(pointColumns.toArray(new String[0]));
    return clean.groupBy(functions.col(NearestCentroid.quoted(entity)))
        .agg(aggs.get(0), aggs.subList(1, aggs.size()).toArray(new Column[0]));
  }

  private Column[] identityAndPoints(boolean byEntity, List<String> dims) {
    List<Column> cols = new ArrayList<>();
    Column[] hashed = byEntity ? new Column[] {functions.col(NearestCentroid.quoted(settings.entity()))}
        : dims.stream().map(c -> functions.col(NearestCentroid.quoted(c)).cast("double")).toArray(Column[]::new);
    cols.add(functions.xxhash64(hashed).as("__eigenmill_identity"));
    for (String c : dims) {
      cols.add(functions.col(NearestCentroid.quoted(c)).cast("double").as(c));
    }
    return cols.toArray(new Column[0]);
  }

  private static double totalSs(Moments m) {
    double[] v = m.variances();
    double s = 0;
    for (double x : v) {
      s += x;
    }
    return s * Math.max(0, m.count() - 1);
  }

  private void checkCounts(PointSummary summary, boolean byEntity, List<String> dims, List<String> warnings) {
    long n = summary.moments().count();
    String unit = byEntity ? "entities (cluster.entity = " + settings.entity() + ")" : "rows";
    if (summary.skipped() > 0) {
      warnings.add(summary.skipped() + " " + unit + " have a null, NaN or infinite value in " + dims
          + " and were left out of the clustering; their assignments have a null cluster");
    }
    if (n == 0) {
      throw new InvalidJobException("cluster: there is nothing to cluster: " + (summary.skipped() == 0
          ? "the points table has no " + unit : "all " + summary.skipped() + " " + unit
          + " have a null, NaN or infinite value in " + dims));
    }
    int kMax = settings.k().isPresent() ? settings.k().getAsInt() : settings.kMax();
    if (n < kMax) {
      throw tooFew(kMax, String.valueOf(n), byEntity);
    }
  }

  private InvalidJobException tooFew(int k, String count, boolean byEntity) {
    String what = (byEntity ? "entities" : "points") + " to cluster";
    if (settings.k().isPresent()) {
      return new InvalidJobException("cluster.k = " + settings.k().getAsInt() + ": there are only " + count + " "
          + what + "; k-means needs at least k distinct points: lower cluster.k");
    }
    return new InvalidJobException("cluster.k-range = " + settings.kMin() + ".." + settings.kMax() + ": there are"
        + " only " + count + " " + what + ", fewer than k = " + k + "; k-means needs at least k distinct points:"
        + " lower the upper end of cluster.k-range");
  }

  /**
   * The points table against the columns the caller named (a mismatch is a fault of the caller, not of the job's
   * settings, which the settings reader and the planner have checked), and the model against the point columns.
   */
  private void validate() {
    List<String> problems = new ArrayList<>();
    checkColumns(problems);
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
    checkModel();
  }

  private void checkColumns(List<String> problems) {
    StructType schema = points.schema();
    List<String> names = Arrays.asList(schema.fieldNames());
    if (pointColumns.isEmpty()) {
      problems.add("cluster: no point columns to cluster");
    }
    for (String c : pointColumns) {
      if (!names.contains(c)) {
        problems.add("cluster: point column " + c + " is not in the points table (columns: " + names + ")");
      } else if (!(schema.apply(c).dataType() instanceof NumericType)) {
        problems.add("cluster: point column " + c + " is " + schema.apply(c).dataType().simpleString()
            + ", not a number");
      }
    }
    for (String c : keyColumns) {
      if (!names.contains(c)) {
        problems.add("cluster: key column " + c + " is not in the points table");
      }
    }
  }

  private void checkModel() {
    if (model == null) {
      return;
    }
    int p = pointColumns.size();
    if (space == ClusterSpace.SCORES && p > model.k()) {
      throw new IllegalArgumentException(p + " score columns but the model keeps only " + model.k()
          + " components");
    }
    if (space == ClusterSpace.FEATURES && p != model.d()) {
      throw new IllegalArgumentException(p + " feature columns but the model has " + model.d() + " features");
    }
  }
}
