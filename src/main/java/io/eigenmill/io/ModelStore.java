package io.eigenmill.io;

import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.InvalidJobException;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import scala.collection.JavaConverters;

/**
 * Writes and reads the {@code model/} table: one Parquet row holding a {@link PcaModel}. Loadings are stored
 * component by component (an array of k arrays of d loadings).
 */
public final class ModelStore {
  private ModelStore() {}

  static final StructType SCHEMA = new StructType()
      .add("format_version", DataTypes.IntegerType, false)
      .add("product_version", DataTypes.StringType, false)
      .add("features", DataTypes.createArrayType(DataTypes.StringType), false)
      .add("feature_types", DataTypes.createArrayType(DataTypes.StringType), false)
      .add("scaling", DataTypes.StringType, false)
      .add("method", DataTypes.StringType, false)
      .add("rows", DataTypes.LongType, false)
      .add("means", DataTypes.createArrayType(DataTypes.DoubleType), false)
      .add("scales", DataTypes.createArrayType(DataTypes.DoubleType), false)
      .add("k", DataTypes.IntegerType, false)
      .add("loadings", DataTypes.createArrayType(DataTypes.createArrayType(DataTypes.DoubleType)), false)
      .add("eigenvalues", DataTypes.createArrayType(DataTypes.DoubleType), false)
      .add("eigenvalues_complete", DataTypes.BooleanType, false)
      .add("total_variance", DataTypes.DoubleType, false)
      .add("schema_fingerprint", DataTypes.StringType, false)
      .add("sds", DataTypes.createArrayType(DataTypes.DoubleType), false);

  public static void write(SparkSession spark, PcaModel m, String path) {
    List<double[]> columns = new ArrayList<>();
    for (int c = 0; c < m.k(); c++) {
      double[] col = new double[m.d()];
      for (int j = 0; j < m.d(); j++) {
        col[j] = m.loading(j, c);
      }
      columns.add(col);
    }
    Row row = RowFactory.create(m.formatVersion(), m.productVersion(), m.features().toArray(new String[0]),
        m.featureTypes().toArray(new String[0]), m.scaling(), m.method().word(), m.rows(), m.means(), m.scales(), m.k(),
        columns.toArray(new double[0][]), m.eigenvalues(), m.eigenvaluesComplete(), m.totalVariance(),
        m.schemaFingerprint(), m.sds());
    spark.createDataFrame(List.of(row), SCHEMA).coalesce(1).write().parquet(path);
  }

  /**
   * Reads a model from {@code path}: a {@code model/} folder or a fit's output folder holding one. {@code key} names
   * the setting the path came from, for error messages.
   */
  public static PcaModel read(SparkSession spark, String key, String path) {
    String modelPath = TableLoader.exists(spark, path + "/model") ? path + "/model" : path;
    TableLoader.requireExists(spark, key, modelPath);
    Dataset<Row> table;
    List<Row> rows;
    try {
      table = spark.read().parquet(modelPath);
      rows = table.collectAsList();
    } catch (RuntimeException e) {
      throw new InvalidJobException(key + " = " + path + ": not a readable model: " + TableLoader.firstLine(e));
    }
    if (rows.size() != 1 || !List.of(table.schema().fieldNames()).contains("format_version")) {
      throw new InvalidJobException(key + " = " + path + ": not an eigenmill model (expected one row with"
          + " format_version, found " + rows.size() + " rows)");
    }
    Row r = rows.get(0);
    List<String> present = List.of(table.schema().fieldNames());
    for (String field : SCHEMA.fieldNames()) {
      if (!present.contains(field)) {
        throw new InvalidJobException(key + " = " + path + ": the model lacks the field " + field
            + " (written by an incompatible version " + (present.contains("product_version")
                ? r.getString(r.fieldIndex("product_version")) : "unknown") + "); refit the model");
      }
    }
    int format = r.getInt(r.fieldIndex("format_version"));
    String writer = r.getString(r.fieldIndex("product_version"));
    if (format > PcaModel.FORMAT_VERSION) {
      throw new InvalidJobException(key + " = " + path + ": model format " + format + " (written by eigenmill "
          + writer + ") is newer than this version reads (" + PcaModel.FORMAT_VERSION + "); use eigenmill "
          + writer + " or later, or refit the model");
    }
    List<double[]> cols = new ArrayList<>();
    for (Object c : r.getList(r.fieldIndex("loadings"))) {
      cols.add(toDoubles(JavaConverters.seqAsJavaList((scala.collection.Seq<?>) c)));
    }
    List<String> features = r.getList(r.fieldIndex("features"));
    int d = features.size();
    int k = r.getInt(r.fieldIndex("k"));
    double[] loadings = new double[d * k];
    for (int c = 0; c < k; c++) {
      System.arraycopy(cols.get(c), 0, loadings, c * d, d);
    }
    return new PcaModel(format, writer, List.copyOf(features), List.copyOf(r.getList(r.fieldIndex("feature_types"))),
        r.getString(r.fieldIndex("scaling")), method(key, path, r.getString(r.fieldIndex("method"))),
        r.getLong(r.fieldIndex("rows")),
        toDoubles(r.getList(r.fieldIndex("means"))), toDoubles(r.getList(r.fieldIndex("scales"))), k, loadings,
        toDoubles(r.getList(r.fieldIndex("eigenvalues"))), r.getBoolean(r.fieldIndex("eigenvalues_complete")),
        r.getDouble(r.fieldIndex("total_variance")), r.getString(r.fieldIndex("schema_fingerprint")),
        toDoubles(r.getList(r.fieldIndex("sds"))));
  }

  /**
   * Where the model table of {@code path} is ({@code path/model} when that exists, else {@code path}), as a fully
   * qualified path with {@code .} and {@code ..} resolved and no trailing slash: two spellings of one folder give
   * the same text.
   */
  public static String location(SparkSession spark, String path) {
    String modelPath = TableLoader.exists(spark, path + "/model") ? path + "/model" : path;
    try {
      org.apache.hadoop.fs.Path p = new org.apache.hadoop.fs.Path(modelPath);
      return p.getFileSystem(spark.sparkContext().hadoopConfiguration()).makeQualified(p).toString();
    } catch (java.io.IOException | IllegalArgumentException e) {
      return modelPath;
    }
  }

  /** The fitted method of a stored model, from its word; {@code auto} is never stored (a fit records its choice). */
  private static Method method(String key, String path, String word) {
    for (Method m : Method.values()) {
      if (m != Method.AUTO && m.word().equals(word)) {
        return m;
      }
    }
    throw new InvalidJobException(key + " = " + path + ": the model's method is '" + word + "', which this version"
        + " does not know (expected covariance, tsqr or randomized); refit the model");
  }

  private static double[] toDoubles(List<?> values) {
    double[] out = new double[values.size()];
    for (int i = 0; i < out.length; i++) {
      out[i] = ((Number) values.get(i)).doubleValue();
    }
    return out;
  }
}
