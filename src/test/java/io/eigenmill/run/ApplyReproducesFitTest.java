package io.eigenmill.run;

import static org.junit.Assert.assertEquals;

import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Path;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.junit.Test;

/**
 * Applying a model to the rows it was fitted on reproduces the fit's own scores exactly. A JUnit 4 test on
 * spark-testing-base's DataFrame suite (run through the vintage engine), using its order-free DataFrame equality.
 */
public class ApplyReproducesFitTest extends SparkSuite.Borrowed {

  @Test
  public void applyingToTheFittedRowsReproducesTheFitScores() {
    String csv = Datasets.csv("usarrests").toString();
    Path dir = JobFiles.scratch("reproduce");
    String common = "input.path = \"" + csv + "\"\ninput.format = csv\nfeatures.keys = [state]\n";
    JobRunner.run(spark(), JobFiles.settings(common + "prepare.scaling = standardize\nreduce.components = 2\n"
        + "output.scores = true\noutput.path = \"" + dir.resolve("fit") + "\"\n"));
    JobRunner.run(spark(), JobFiles.settings(common + "apply.model = \"" + dir.resolve("fit") + "\"\n"
        + "output.path = \"" + dir.resolve("apply") + "\"\n"));
    Dataset<Row> fitted = spark().read().parquet(dir.resolve("fit/scores").toString())
        .select("state", "pc_1", "pc_2", "t2", "q");
    Dataset<Row> applied = spark().read().parquet(dir.resolve("apply/scores").toString())
        .select("state", "pc_1", "pc_2", "t2", "q");
    assertEquals(50, applied.count());
    // exact equality: the same Scorer with the same model arrays and block size
    assertDataFrameNoOrderEquals(fitted, applied);
  }
}
