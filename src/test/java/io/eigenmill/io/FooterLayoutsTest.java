package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.apache.hadoop.conf.Configuration;
import org.apache.hadoop.fs.FileStatus;
import org.apache.parquet.hadoop.ParquetFileReader;
import org.apache.parquet.hadoop.metadata.BlockMetaData;
import org.apache.parquet.hadoop.util.HadoopInputFile;
import org.apache.spark.sql.functions;
import org.junit.jupiter.api.Test;

/**
 * The footer layouts a run's input check keeps for its plan: what they say equals the footer as Parquet's own reader
 * decodes it (row groups' starts and bytes) and the rows Spark counts; the check keeps every file's layout, a second
 * read returns the kept one, and a file rewritten in place (new length and time) is read again.
 */
class FooterLayoutsTest extends SparkSuite {
  @Test
  void theInputCheckKeepsEachFootersLayoutAndARewrittenFileIsReadAgain() throws Exception {
    Path dir = Files.createTempDirectory("eigenmill-footers");
    try {
      String path = dir.resolve("t").toString();
      // several row groups per file: 60,000 rows of 4 random columns in 64 KiB row groups, two files
      spark.range(60_000).select(functions.rand(1).as("a"), functions.rand(2).as("b"), functions.rand(3).as("c"),
          functions.col("id").cast("double").as("d")).repartition(2).write().option("parquet.block.size", 64 * 1024)
          .parquet(path);
      Configuration conf = spark.sparkContext().hadoopConfiguration();
      JobSettings settings = JobFiles.settings("name = t\ninput.path = \"" + path + "\"\noutput.path = \""
          + dir.resolve("out") + "\"\n");
      InputFiles.Check check = InputFiles.check(spark, settings.input());
      List<FileStatus> files = InputFiles.statuses(conf, path);
      assertEquals(2, files.size());
      assertEquals(2, check.readable().size());
      long rows = 0;
      for (FileStatus f : files) {
        assertTrue(FooterLayouts.kept(f), "the check kept " + f.getPath());
        FooterLayouts.Layout kept = FooterLayouts.read(conf, f.getPath());
        assertSame(kept, FooterLayouts.read(conf, f), "read once, then kept");
        // Parquet's own reader of the same footer (an outside reading of the file)
        try (ParquetFileReader reader = ParquetFileReader.open(HadoopInputFile.fromStatus(f, conf))) {
          List<BlockMetaData> groups = reader.getFooter().getBlocks();
          assertTrue(groups.size() > 1, "several row groups: " + groups.size());
          assertArrayEquals(groups.stream().mapToLong(BlockMetaData::getStartingPos).toArray(),
              kept.rowGroupStarts());
          assertArrayEquals(groups.stream().mapToLong(BlockMetaData::getCompressedSize).toArray(),
              kept.rowGroupBytes());
          assertEquals(f.getLen(), kept.length());
        }
        rows += kept.rows();
      }
      assertEquals(spark.read().parquet(path).count(), rows, "the footers' rows are the rows Spark counts");

      // rewritten in place: another version, read again
      FileStatus first = files.get(0);
      spark.range(10).select(functions.rand(4).as("a"), functions.rand(5).as("b"), functions.rand(6).as("c"),
          functions.col("id").cast("double").as("d")).coalesce(1).write().parquet(dir.resolve("small").toString());
      FileStatus small = InputFiles.statuses(conf, dir.resolve("small").toString()).get(0);
      Files.copy(Path.of(small.getPath().toUri()), Path.of(first.getPath().toUri()),
          java.nio.file.StandardCopyOption.REPLACE_EXISTING);
      // Hadoop's local checksum of the old content would refuse the new one
      Path written = Path.of(first.getPath().toUri());
      Files.deleteIfExists(written.resolveSibling("." + written.getFileName() + ".crc"));
      FileStatus now = InputFiles.statuses(conf, path).get(0);
      assertFalse(FooterLayouts.kept(now), "a new version is not taken for the old one");
      assertEquals(10, FooterLayouts.read(conf, now).rows());
    } finally {
      LoopbackCluster.deleteTree(dir);
    }
  }
}
