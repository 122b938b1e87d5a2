package io.eigenmill.pca;

import io.eigenmill.io.DriverTables;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.io.PcaModel;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;

/**
 * The small tables of a grouped fit built on the driver: {@code components/} and {@code spectrum/} with the rows,
 * values and schemas that Spark's explosion of the model table gives ({@link FitTables#exploded}: groups in the
 * model table's order, then components, then features), and {@code model/}; each written without a Spark job
 * ({@link DriverTables}). The shares are the explosion's expressions evaluated in the same order: eigenvalue /
 * total variance when the total is above zero (Spark SQL orders NaN above every number, so a NaN total counts as
 * above), else 0; the cumulative share sums them from 0 in component order.
 */
final class GroupTables {
  private GroupTables() {}

  /** Whether every table of the groups has at most {@link DriverTables#MAX_ROWS} rows. */
  static boolean fitsDriver(Groups g) {
    long loadings = 0;
    long eigenvalues = 0;
    for (PcaModel m : g.models().values()) {
      loadings += (long) m.k() * m.d();
      eigenvalues += m.eigenvalues().length;
    }
    return Math.max(loadings, eigenvalues) <= DriverTables.MAX_ROWS && g.models().size() <= DriverTables.MAX_ROWS;
  }

  /**
   * Writes the model table {@code models} (rows held by the driver: its collection runs no job) and the two tables
   * exploded from it, with the schemas of {@code exploded} (components, spectrum).
   */
  static void write(SparkSession spark, Dataset<Row> models, Dataset<Row>[] exploded, OutputCommit out) {
    List<Row> rows = models.collectAsList();
    int keys = exploded[0].schema().size() - 3; // the group columns lead: feature, component, loading follow
    int features = models.schema().fieldIndex("features");
    int loadings = models.schema().fieldIndex("loadings");
    int eigenvalues = models.schema().fieldIndex("eigenvalues");
    int total = models.schema().fieldIndex("total_variance");
    int kept = models.schema().fieldIndex("k");
    List<Row> components = new ArrayList<>();
    List<Row> spectrum = new ArrayList<>();
    for (Row r : rows) {
      List<Object> key = new ArrayList<>();
      for (int i = 0; i < keys; i++) {
        key.add(r.get(i));
      }
      List<String> names = r.getList(features);
      List<Object> vectors = r.getList(loadings);
      for (int c = 0; c < vectors.size(); c++) {
        List<Double> vector = values(vectors.get(c));
        for (int j = 0; j < vector.size(); j++) {
          components.add(row(key, j < names.size() ? names.get(j) : null, c + 1, vector.get(j)));
        }
      }
      List<Double> lambda = r.getList(eigenvalues);
      double t = r.getDouble(total);
      int k = r.getInt(kept);
      double cumulative = 0.0;
      for (int c = 0; c < lambda.size(); c++) {
        double share = share(lambda.get(c), t);
        cumulative += share;
        spectrum.add(row(key, c + 1, lambda.get(c), share, cumulative, c < k));
      }
    }
    DriverTables.write(spark, exploded[0].schema(), components, out.staged("components"));
    DriverTables.write(spark, exploded[1].schema(), spectrum, out.staged("spectrum"));
    DriverTables.write(spark, models, out.staged("model"));
  }

  private static double share(Double value, double total) {
    return total > 0 || Double.isNaN(total) ? value / total : 0.0;
  }

  @SuppressWarnings("unchecked")
  private static List<Double> values(Object vector) {
    return vector instanceof List<?> list ? (List<Double>) list
        : scala.collection.JavaConverters.seqAsJavaList((scala.collection.Seq<Double>) vector);
  }

  private static Row row(List<Object> key, Object... rest) {
    List<Object> all = new ArrayList<>(key);
    all.addAll(java.util.Arrays.asList(rest));
    return RowFactory.create(all.toArray());
  }
}
