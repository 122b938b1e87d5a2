package io.eigenmill.plan;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Locale;
import java.util.TreeSet;

/**
 * How the Parquet scan of a job's input is cut into splits (Spark's file partitions, one task each), decided from
 * the footers the planner reads for its row count, and the number of splits the scan will have.
 *
 * <p>Why wide scans get fewer, larger splits: every split of a Parquet file decodes the file's whole footer (the
 * metadata of every column chunk of every row group) and sets up a reader for every column it reads, so a split
 * costs time in proportion to the columns, however few rows it reads. Measured on the benchmark's wide table
 * (10,000 rows x 20,000 doubles, one 1.6 GB file of 13 row groups, Spark 3.5.9, 2 cores): about 7 s per split, 0.35
 * ms per column, against about 0.4 s to read a split of Spark's default 128 MiB at the read floor's 320 MB/s per
 * core. From {@link #WIDE_FEATURES} columns read, the setup of a default split (0.35 s and more) costs as much as
 * reading it, so the scan is cut into about one split per task slot (Spark's default parallelism) instead: each
 * slot pays for one footer, and no slot waits while another reads. Below, the footer is a small share of a split
 * (about 9% at 100 columns) and Spark's own splits, which balance the load better, are kept.
 *
 * <p>The split size of a wide scan is the input's bytes per slot, but never less than its largest row group, and
 * large enough that every piece of a file holds a row group to read ({@link #withoutIdlePieces}): Spark cuts a file
 * into pieces of the split size from its start, and Parquet gives each row group to the one piece that holds its
 * midpoint, so a row group is never read in parts, but a piece holding no midpoint would decode the footer for
 * nothing.
 * The engine applies the size while the scan builds its splits ({@code ColumnarScan.batches(long)}), as
 * {@code spark.sql.files.maxPartitionBytes} with {@code spark.sql.files.minPartitionNum = 1} (so that Spark's own
 * cap of the bytes per core does not cut it again), and restores the session's settings at once.
 *
 * @param columns columns the scan reads
 * @param files the files' lengths in bytes and their row groups (null for an input whose footers were not read)
 * @param slots Spark's default parallelism, the tasks that run at once
 * @param splitBytes the split size the engine applies, or 0 for Spark's own choice
 * @param sparkBytes the split size Spark would choose itself ({@code FilePartition.maxSplitBytes})
 * @param splits the splits the scan will have; -1 when not known (no footers read)
 * @param sparkSplits the splits Spark would make itself; -1 when not known
 * @param why why this many, in words
 */
public record ScanSplits(int columns, List<FileLayout> files, int slots, long splitBytes, long sparkBytes,
    int splits, int sparkSplits, String why) {

  /** Columns read from which a scan gets about one split per task slot (see the class comment). */
  public static final int WIDE_FEATURES = 1000;

  /**
   * One Parquet file as the scan sees it.
   *
   * @param length bytes of the file (what Spark's listing counts)
   * @param rowGroupStarts where each row group starts (its first column chunk)
   * @param rowGroupBytes compressed bytes of each row group (all its column chunks)
   */
  public record FileLayout(long length, long[] rowGroupStarts, long[] rowGroupBytes) {
    public FileLayout {
      rowGroupStarts = rowGroupStarts.clone();
      rowGroupBytes = rowGroupBytes.clone();
    }
  }

  /**
   * Spark's settings that decide the splits.
   *
   * @param maxPartitionBytes {@code spark.sql.files.maxPartitionBytes}
   * @param openCostBytes {@code spark.sql.files.openCostInBytes}
   * @param minPartitions {@code spark.sql.files.minPartitionNum}, or Spark's default parallelism when unset
   * @param maxPartitions {@code spark.sql.files.maxPartitionNum}, or 0 when unset
   */
  public record SparkSplitConf(long maxPartitionBytes, long openCostBytes, int minPartitions, int maxPartitions) {}

  /**
   * The splits of a scan of {@code columns} columns over {@code files}, with {@code slots} tasks at once and
   * Spark's settings {@code conf}.
   */
  public static ScanSplits of(int columns, List<FileLayout> files, int slots, SparkSplitConf conf) {
    long bytes = 0;
    long opened = 0;
    long largestGroup = 0;
    int groups = 0;
    for (FileLayout f : files) {
      bytes += f.length();
      opened += f.length() + conf.openCostBytes();
      for (long g : f.rowGroupBytes()) {
        largestGroup = Math.max(largestGroup, g);
      }
      groups += f.rowGroupBytes().length;
    }
    // FilePartition.maxSplitBytes: min(maxPartitionBytes, max(openCost, total bytes with open costs / min partitions))
    long spark = Math.min(conf.maxPartitionBytes(), Math.max(conf.openCostBytes(),
        opened / Math.max(1, conf.minPartitions())));
    String groupText = String.format(Locale.ROOT, "%,d row group%s of at most %s", groups, groups == 1 ? "" : "s",
        MemoryEstimate.human(largestGroup));
    if (files.isEmpty()) {
      return new ScanSplits(columns, List.copyOf(files), slots, 0, spark, 0, 0, "no file to read");
    }
    if (columns < WIDE_FEATURES) {
      int n = count(files, spark, conf);
      return new ScanSplits(columns, List.copyOf(files), slots, 0, spark, n, n, String.format(Locale.ROOT,
          "Spark's default: splits of at most %s (spark.sql.files.maxPartitionBytes %s, capped at the bytes per"
              + " task slot); %,d columns read, fewer than %,d, so the footers are a small share of each split",
          MemoryEstimate.human(spark), MemoryEstimate.human(conf.maxPartitionBytes()), columns, WIDE_FEATURES));
    }
    long perSlot = (bytes + slots - 1) / Math.max(1, slots);
    long wide = withoutIdlePieces(files, Math.max(Math.max(perSlot, largestGroup), conf.openCostBytes()));
    if (wide <= spark) {
      int n = count(files, spark, conf);
      return new ScanSplits(columns, List.copyOf(files), slots, 0, spark, n, n, String.format(Locale.ROOT,
          "Spark's default: splits of at most %s already give about one per task slot (%d) for these %,d columns;"
              + " %s", MemoryEstimate.human(spark), slots, columns, groupText));
    }
    SparkSplitConf applied = new SparkSplitConf(wide, conf.openCostBytes(), 1, conf.maxPartitions());
    int n = count(files, wide, applied);
    int sparkSplits = count(files, spark, conf);
    return new ScanSplits(columns, List.copyOf(files), slots, wide, spark, n, sparkSplits, String.format(Locale.ROOT,
        "%,d columns read (%,d or more): about one split per task slot (%d), each split decoding its file's footer"
            + " once, instead of Spark's %d splits of at most %s; never smaller than a row group (%s)", columns,
        WIDE_FEATURES, slots, sparkSplits, MemoryEstimate.human(spark), groupText));
  }

  /**
   * The smallest split size from {@code least} on that leaves no piece of a file without a row group to read: a
   * piece reads the row groups whose midpoints it holds (Parquet's rule for a split), and a piece with none would
   * still decode the file's footer. Tried: {@code least}, then each size that cuts a file into equal pieces; a file's
   * length always works for that file, so the largest file's length is the last resort.
   */
  static long withoutIdlePieces(List<FileLayout> files, long least) {
    TreeSet<Long> candidates = new TreeSet<>();
    candidates.add(least);
    for (FileLayout f : files) {
      for (long n = (f.length() + least - 1) / least; n >= 1; n--) {
        long size = (f.length() + n - 1) / n;
        if (size >= least) {
          candidates.add(size);
        }
      }
    }
    for (long size : candidates) {
      if (idlePieces(files, size) == 0) {
        return size;
      }
    }
    return candidates.last();
  }

  /** Pieces of splits of {@code size} bytes that hold no row group's midpoint (files without row groups aside). */
  static int idlePieces(List<FileLayout> files, long size) {
    int idle = 0;
    for (FileLayout f : files) {
      if (f.rowGroupStarts().length == 0) {
        continue;
      }
      for (long offset = 0; offset < f.length(); offset += size) {
        boolean holds = false;
        for (int g = 0; g < f.rowGroupStarts().length && !holds; g++) {
          long mid = f.rowGroupStarts()[g] + f.rowGroupBytes()[g] / 2;
          holds = mid >= offset && mid < offset + size;
        }
        idle += holds ? 0 : 1;
      }
    }
    return idle;
  }

  /** A scan whose files were not read before the run (too many, or not Parquet): Spark's own splits. */
  public static ScanSplits unplanned(int columns, String why) {
    return new ScanSplits(columns, null, 0, 0, 0, -1, -1, why);
  }

  /** The split size the engine applies ({@link #splitBytes}), or 0 for Spark's own choice. */
  public long applied() {
    return splitBytes;
  }

  /** The line {@code plan} prints. */
  public String line() {
    if (splits < 0) {
      return "Spark's default (" + why + ")";
    }
    long size = splitBytes > 0 ? splitBytes : sparkBytes;
    return String.format(Locale.ROOT, "%d of at most %s (%s)", splits, MemoryEstimate.human(size), why);
  }

  /**
   * Spark's file partitions of {@code files} with splits of {@code maxSplitBytes}: every file cut from its start
   * into pieces of that size, the pieces sorted by size (largest first, a stable sort) and packed in that order, a
   * partition closing when the next piece would take it past {@code maxSplitBytes} (each piece counts its bytes
   * plus the open cost); when that gives more than {@code spark.sql.files.maxPartitionNum} partitions, Spark packs
   * again with the total over that number. As {@code PartitionedFileUtil.splitFiles} and
   * {@code FilePartition.getFilePartitions} do in Spark 3.5 and 4.
   */
  static int count(List<FileLayout> files, long maxSplitBytes, SparkSplitConf conf) {
    List<Long> pieces = new ArrayList<>();
    for (FileLayout f : files) {
      for (long offset = 0; offset < f.length(); offset += maxSplitBytes) {
        pieces.add(Math.min(maxSplitBytes, f.length() - offset));
      }
    }
    pieces.sort(Comparator.reverseOrder());
    int n = pack(pieces, maxSplitBytes, conf.openCostBytes());
    if (conf.maxPartitions() > 0 && n > conf.maxPartitions()) {
      long total = 0;
      for (long p : pieces) {
        total += p + conf.openCostBytes();
      }
      long desired = (total + conf.maxPartitions() - 1) / conf.maxPartitions();
      n = pack(pieces, desired, conf.openCostBytes());
    }
    return n;
  }

  private static int pack(List<Long> pieces, long maxSplitBytes, long openCost) {
    int partitions = 0;
    long current = 0;
    boolean open = false;
    for (long p : pieces) {
      if (current + p > maxSplitBytes) {
        partitions += open ? 1 : 0;
        current = 0;
      }
      current += p + openCost;
      open = true;
    }
    return partitions + (open ? 1 : 0);
  }
}
