package io.eigenmill.plan;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.plan.ScanSplits.FileLayout;
import io.eigenmill.plan.ScanSplits.SparkSplitConf;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The split arithmetic without Spark. Expected counts are worked by hand from Spark 3.5's {@code
 * FilePartition.maxSplitBytes}, {@code PartitionedFileUtil.splitFiles} and {@code FilePartition.getFilePartitions}
 * (pieces of maxSplitBytes from each file's start, largest first, next-fit packing with the open cost), the rules
 * {@code ScanSplits.count} follows; that the count equals Spark's own is checked against Spark in
 * {@code pca.WideSplitsTest}.
 */
class ScanSplitsTest {
  private static final long MIB = 1L << 20;
  /** Spark's defaults: 128 MiB splits, 4 MiB open cost; 2 task slots. */
  private static final SparkSplitConf DEFAULTS = new SparkSplitConf(128 * MIB, 4 * MIB, 2, 0);

  /** A file of {@code groups} row groups of {@code groupBytes} after a 4-byte magic, and a footer. */
  private static FileLayout file(int groups, long groupBytes, long footer) {
    long[] starts = new long[groups];
    long[] bytes = new long[groups];
    for (int g = 0; g < groups; g++) {
      starts[g] = 4 + g * groupBytes;
      bytes[g] = groupBytes;
    }
    return new FileLayout(4 + groups * groupBytes + footer, starts, bytes);
  }

  @Test
  void aWideFileIsReadInOneSplitPerSlotInsteadOfSparksThirteen() {
    // the benchmark's wide table: one 1.6 GB file of 13 row groups of about 123 MiB
    FileLayout f = file(13, 123 * MIB, 20 * MIB);
    ScanSplits s = ScanSplits.of(20_000, List.of(f), 2, DEFAULTS);
    // Spark: min(128 MiB, max(4 MiB, (len + 4 MiB) / 2)) = 128 MiB, so ceil(len / 128 MiB) = 13 pieces, none packed
    assertEquals(128 * MIB, s.sparkBytes());
    assertEquals(13, s.sparkSplits());
    // ours: ceil(len / 2) >= the 123 MiB row group: two pieces
    assertEquals((f.length() + 1) / 2, s.splitBytes());
    assertEquals(2, s.splits());
    assertTrue(s.line().startsWith("2 of at most 809.5 MiB (20,000 columns read (1,000 or more): about one split"
        + " per task slot (2), each split decoding its file's footer once, instead of Spark's 13 splits of at most"
        + " 128.0 MiB; never smaller than a row group (13 row groups of at most 123.0 MiB)"), s.line());
  }

  @Test
  void aWideSplitIsNeverSmallerThanARowGroupNorLeftWithNoRowGroup() {
    // one row group of 300 MiB over 4 slots: splits of 75 MiB would leave three pieces with no row group's midpoint
    FileLayout f = file(1, 300 * MIB, MIB);
    ScanSplits s = ScanSplits.of(5_000, List.of(f), 4, new SparkSplitConf(128 * MIB, 4 * MIB, 4, 0));
    // 300 MiB (the row group) would leave the last 1 MiB + 4 bytes (the footer) as a piece of its own: the whole file
    assertEquals(1, ScanSplits.idlePieces(List.of(f), 300 * MIB));
    assertEquals(f.length(), s.splitBytes());
    assertEquals(1, s.splits());
    // Spark: (len + 4 MiB) / 4 = 76.25 MiB, four pieces
    assertEquals(4, s.sparkSplits());
  }

  @Test
  void piecesThatWouldHoldNoRowGroupMoveTheSplitSize() {
    // 10 row groups of 100 MiB and a 1 MiB footer over 2 slots: 500.5 MiB pieces hold 5 midpoints each
    FileLayout f = file(10, 100 * MIB, MIB);
    assertEquals(0, ScanSplits.idlePieces(List.of(f), (f.length() + 1) / 2));
    ScanSplits s = ScanSplits.of(3_000, List.of(f), 2, DEFAULTS);
    assertEquals((f.length() + 1) / 2, s.splitBytes());
    assertEquals(2, s.splits());
  }

  @Test
  void narrowScansKeepSparksSplits() {
    FileLayout f = file(13, 123 * MIB, MIB);
    ScanSplits s = ScanSplits.of(999, List.of(f), 2, DEFAULTS);
    assertEquals(0, s.splitBytes(), "no size applied: Spark's own");
    assertEquals(13, s.splits());
    assertTrue(s.line().startsWith("13 of at most 128.0 MiB (Spark's default:"), s.line());
    assertTrue(s.line().contains("999 columns read, fewer than 1,000"), s.line());
  }

  @Test
  void aWideScanThatSparkAlreadyCutsPerSlotKeepsSparksSplits() {
    // 8 files of 10 MiB over 2 slots: Spark's bytes per core (56 MiB) is below 128 MiB, and ours would be 40 MiB
    List<FileLayout> files = new ArrayList<>();
    for (int i = 0; i < 8; i++) {
      files.add(file(1, 10 * MIB - 4 - 1024, 1024));
    }
    ScanSplits s = ScanSplits.of(2_000, files, 2, DEFAULTS);
    assertEquals(0, s.splitBytes());
    // max split (8 x 14 MiB) / 2 = 56 MiB; pieces of 10 MiB + 4 MiB open cost: 4 per partition (4 x 14 = 56)
    assertEquals(56 * MIB, s.sparkBytes());
    assertEquals(2, s.splits());
    assertTrue(s.line().contains("already give about one per task slot (2)"), s.line());
  }

  @Test
  void manySmallFilesArePackedAndMaxPartitionNumRepacks() {
    List<FileLayout> files = new ArrayList<>();
    for (int i = 0; i < 10; i++) {
      files.add(new FileLayout(3 * MIB, new long[] {4}, new long[] {3 * MIB - 1024}));
    }
    // splits of 8 MiB, open cost 1 MiB: 3 + 1 + 3 = 7 <= 8, a third piece would need 7 + 3 > 8: 2 a partition
    SparkSplitConf conf = new SparkSplitConf(8 * MIB, MIB, 1, 0);
    assertEquals(5, ScanSplits.count(files, 8 * MIB, conf));
    // at most 3 partitions: packed again with ceil(10 x 4 MiB / 3) = 13.33 MiB, 3 pieces a partition (12 <= 13.33)
    assertEquals(4, ScanSplits.count(files, 8 * MIB, new SparkSplitConf(8 * MIB, MIB, 1, 3)));
  }

  @Test
  void noFilesNoSplits() {
    ScanSplits s = ScanSplits.of(20_000, List.of(), 2, DEFAULTS);
    assertEquals(0, s.splits());
  }
}
