package io.eigenmill.pca;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.io.ModelStore;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.Choices.OutputMode;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Path;
import java.sql.Date;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.spark.scheduler.SparkListener;
import org.apache.spark.scheduler.SparkListenerJobStart;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.Test;

/**
 * A grouped fit's components/, spectrum/ and model/ built on the driver read back as Spark's explosion of the model
 * table writes them (the outside reference: Spark's own posexplode, element_at and aggregate, written by Spark):
 * same schema, same rows in the same order, doubles bit for bit; group keys of type date and string with a null
 * group; and no Spark job runs to write them.
 */
class GroupTablesTest extends SparkSuite {

  @Test
  void driverTablesEqualSparksExplosion() throws Exception {
    Path dir = JobFiles.scratch("group-tables");
    StructType schema = new StructType().add("day", DataTypes.DateType).add("hw", DataTypes.StringType)
        .add("a", DataTypes.DoubleType).add("b", DataTypes.DoubleType).add("c", DataTypes.DoubleType);
    SplittableRandom r = new SplittableRandom(11);
    List<Row> rows = new ArrayList<>();
    String[] hw = {"gen1", null, "gen3"};
    for (int i = 0; i < 600; i++) {
      double u = r.nextGaussian();
      rows.add(RowFactory.create(Date.valueOf(i % 2 == 0 ? "2026-03-29" : "2026-10-25"), hw[i % 3],
          u + 0.1 * r.nextGaussian(), (i % 3 + 1) * u + r.nextGaussian(), r.nextGaussian() * 1e-3));
    }
    spark.createDataFrame(rows, schema).write().parquet(dir.resolve("in").toString());
    RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("in")
        + "\"\nfeatures.columns = [a, b, c]\nreduce.group-by = [day, hw]\nreduce.min-group-rows = 20\n"
        + "reduce.components = 2\nreduce.method = covariance\noutput.path = \"" + dir.resolve("fit") + "\"\n"));
    Groups g = run.fit().groups();
    assertEquals(6, g.models().size(), "groups with a model");
    assertTrue(GroupTables.fitsDriver(g), "small groups go to the driver");

    OutputCommit bySpark = OutputCommit.begin(spark, dir.resolve("spark").toString(), OutputMode.FAIL_IF_EXISTS);
    FitTables.writeGroupsBySpark(spark, ModelStore.groupTable(spark, g.by(), g.models()), g.by(), bySpark);
    bySpark.commit();

    AtomicInteger jobs = new AtomicInteger();
    SparkListener counter = new SparkListener() {
      @Override
      public void onJobStart(SparkListenerJobStart start) {
        jobs.incrementAndGet();
      }
    };
    OutputCommit onDriver = OutputCommit.begin(spark, dir.resolve("driver").toString(), OutputMode.FAIL_IF_EXISTS);
    Dataset<Row> models = ModelStore.groupTable(spark, g.by(), g.models());
    Dataset<Row>[] exploded = FitTables.exploded(models, g.by());
    spark.sparkContext().listenerBus().waitUntilEmpty();
    spark.sparkContext().addSparkListener(counter);
    try {
      GroupTables.write(spark, models, exploded, onDriver);
      spark.sparkContext().listenerBus().waitUntilEmpty();
    } finally {
      spark.sparkContext().removeSparkListener(counter);
    }
    assertEquals(0, jobs.get(), "Spark jobs while the groups' tables were written from the driver");
    onDriver.commit();

    for (String table : List.of("components", "spectrum", "model")) {
      Dataset<Row> ours = spark.read().parquet(dir.resolve("driver").resolve(table).toString());
      Dataset<Row> theirs = spark.read().parquet(dir.resolve("spark").resolve(table).toString());
      assertEquals(theirs.schema(), ours.schema(), table + " schema");
      assertEquals(canon(theirs.collectAsList()), canon(ours.collectAsList()), table + " rows in order");
    }
    assertEquals(6 * 2 * 3, spark.read().parquet(dir.resolve("driver").resolve("components").toString()).count(),
        "loadings: 6 groups, k = 2, d = 3");
  }

  /** Values as text, doubles by their bits. */
  private static String canon(Object v) {
    if (v instanceof Double d) {
      return "d" + Long.toHexString(Double.doubleToRawLongBits(d));
    }
    if (v instanceof Row row) {
      List<String> out = new ArrayList<>();
      for (int i = 0; i < row.length(); i++) {
        out.add(canon(row.get(i)));
      }
      return out.toString();
    }
    if (v instanceof List<?> list) {
      List<String> out = new ArrayList<>();
      list.forEach(o -> out.add(canon(o)));
      return out.toString();
    }
    if (v instanceof scala.collection.Seq<?> seq) {
      return canon(scala.collection.JavaConverters.seqAsJavaList(seq));
    }
    return v == null ? "null" : v.getClass().getSimpleName() + ":" + v;
  }
}
