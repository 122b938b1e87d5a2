package io.eigenmill.pca;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.io.DriverTables;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.pca.math.Spectrum;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/** Writes the fit's small tables: {@code components/} (feature, component, loading) and {@code spectrum/}. */
public final class FitTables {
  private FitTables() {}

  /**
   * Writes the tables of a grouped fit: {@code model/} (one row per group with a model, the group columns first),
   * {@code pooled-model/} (the model of all rows, as a fit without groups writes it), and {@code components/} and
   * {@code spectrum/} with the group columns first. The last two are built on the driver ({@link GroupTables}) when
   * each has at most {@link DriverTables#MAX_ROWS} rows, else exploded by Spark from the model table (one row per
   * group): at 10,000 groups of 100 features and k = 10, components/ has 10 million rows, which the driver must not
   * build one by one. Shares and cumulative shares are the same sums in the same order as
   * {@link Spectrum#varianceShares} and {@link Spectrum#cumulativeVarianceShares}.
   */
  static void writeGroups(SparkSession spark, FitResult fit, OutputCommit out) {
    Groups g = fit.groups();
    Dataset<Row> models = ModelStore.groupTable(spark, g.by(), g.models());
    if (GroupTables.fitsDriver(g)) {
      GroupTables.write(spark, models, exploded(models, g.by()), out);
    } else {
      writeGroupsBySpark(spark, models, g.by(), out);
    }
    ModelStore.write(spark, fit.model(), out.staged("pooled-model"));
  }

  /** The components and spectrum tables as Spark explodes them from the model table (their schemas, lazily). */
  static Dataset<Row>[] exploded(Dataset<Row> models, KeyColumns by) {
    List<Column> keys = new ArrayList<>();
    for (String c : by.names()) {
      keys.add(functions.col(c));
    }
    Dataset<Row> perComponent = models.select(concat(keys, functions.col("features"),
        functions.posexplode(functions.col("loadings")).as(new String[] {"c0", "vector"})));
    Dataset<Row> loadings = perComponent.select(concat(keys, functions.col("features"), functions.col("c0"),
        functions.posexplode(functions.col("vector")).as(new String[] {"j", "loading"})));
    Dataset<Row> components = loadings.select(concat(keys,
        functions.expr("element_at(features, j + 1)").as("feature"), functions.expr("c0 + 1").as("component"),
        functions.col("loading")));
    Dataset<Row> perEigenvalue = models.select(concat(keys, functions.col("eigenvalues"),
        functions.col("total_variance"), functions.col("k"),
        functions.posexplode(functions.col("eigenvalues")).as(new String[] {"c0", "eigenvalue"})));
    String share = "(CASE WHEN total_variance > 0 THEN %s / total_variance ELSE 0D END)";
    Dataset<Row> spectrum = perEigenvalue.select(concat(keys, functions.expr("c0 + 1").as("component"),
        functions.col("eigenvalue"), functions.expr(String.format(share, "eigenvalue")).as("variance_share"),
        functions.expr("aggregate(slice(transform(eigenvalues, x -> " + String.format(share, "x") + "), 1, c0 + 1),"
            + " 0D, (acc, x) -> acc + x)").as("cumulative_variance_share"),
        functions.expr("c0 < k").as("kept")));
    @SuppressWarnings("unchecked")
    Dataset<Row>[] both = new Dataset[] {components, spectrum};
    return both;
  }

  /** Writes the model, components and spectrum tables of the groups by Spark (one job each). */
  static void writeGroupsBySpark(SparkSession spark, Dataset<Row> table, KeyColumns by, OutputCommit out) {
    Dataset<Row> models = table.cache();
    try {
      Dataset<Row>[] tables = exploded(models, by);
      tables[0].coalesce(1).write().parquet(out.staged("components"));
      tables[1].coalesce(1).write().parquet(out.staged("spectrum"));
      DriverTables.write(spark, table, out.staged("model"));
    } finally {
      models.unpersist();
    }
  }

  private static Column[] concat(List<Column> first, Column... rest) {
    List<Column> all = new ArrayList<>(first);
    all.addAll(java.util.Arrays.asList(rest));
    return all.toArray(Column[]::new);
  }

  public static void write(SparkSession spark, FitResult fit, OutputCommit out) {
    if (fit.groups() != null) {
      writeGroups(spark, fit, out);
      return;
    }
    Spectrum s = fit.spectrum();
    List<String> features = fit.model().features();
    List<Row> loadings = new ArrayList<>();
    for (int c = 0; c < fit.model().k(); c++) {
      for (int j = 0; j < features.size(); j++) {
        loadings.add(RowFactory.create(features.get(j), c + 1, s.loading(j, c)));
      }
    }
    DriverTables.write(spark, ModelStore.COMPONENTS, loadings, out.staged("components"));
    double[] shares = s.varianceShares();
    double[] cumulative = s.cumulativeVarianceShares();
    List<Row> spectrum = new ArrayList<>();
    for (int c = 0; c < s.available(); c++) {
      spectrum.add(RowFactory.create(c + 1, s.eigenvalues()[c], shares[c], cumulative[c], c < fit.model().k()));
    }
    DriverTables.write(spark, ModelStore.SPECTRUM, spectrum, out.staged("spectrum"));
    ModelStore.write(spark, fit.model(), out.staged("model"));
  }
}
