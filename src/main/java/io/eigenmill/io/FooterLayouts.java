package io.eigenmill.io;

import java.io.IOException;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import org.apache.hadoop.conf.Configuration;
import org.apache.hadoop.fs.FileStatus;
import org.apache.hadoop.fs.Path;
import org.apache.parquet.hadoop.ParquetFileReader;
import org.apache.parquet.hadoop.metadata.BlockMetaData;
import org.apache.parquet.hadoop.util.HadoopInputFile;

/**
 * What a Parquet file's footer says about its layout (row groups, rows), decoded once per version of the file and
 * kept for the process. A run reads every footer when it checks its input ({@link InputFiles#check}); the plan then
 * takes the row counts and row groups from here instead of decoding the footers again (at 20,000 columns a footer
 * of one file of 12 row groups took 2-3 s to decode on this machine).
 *
 * <p>A version is the file's path, length and modification time as its file system reports them: a file rewritten
 * in place is read again. At most {@link #LIMIT} layouts are kept; beyond that the store starts over.
 */
public final class FooterLayouts {
  /** Layouts kept at most. */
  static final int LIMIT = 4096;
  private static final Map<String, Layout> KEPT = new ConcurrentHashMap<>();

  private FooterLayouts() {}

  /**
   * @param length the file's bytes
   * @param rowGroupStarts each row group's first byte
   * @param rowGroupBytes each row group's compressed bytes
   * @param rows the rows of all row groups
   */
  public record Layout(long length, long[] rowGroupStarts, long[] rowGroupBytes, long rows) {
    public Layout {
      rowGroupStarts = rowGroupStarts.clone();
      rowGroupBytes = rowGroupBytes.clone();
    }
  }

  /** The layout of {@code file}: kept, or read from its footer (and kept). */
  public static Layout read(Configuration conf, Path file) throws IOException {
    return read(conf, file.getFileSystem(conf).getFileStatus(file));
  }

  /** The layout of the file {@code status} describes: kept, or read from its footer (and kept). */
  public static Layout read(Configuration conf, FileStatus status) throws IOException {
    String key = key(status);
    Layout kept = KEPT.get(key);
    if (kept != null) {
      return kept;
    }
    try (ParquetFileReader reader = ParquetFileReader.open(HadoopInputFile.fromStatus(status, conf))) {
      Layout layout = of(reader.getFooter().getBlocks(), status.getLen());
      if (KEPT.size() >= LIMIT) {
        KEPT.clear();
      }
      KEPT.put(key, layout);
      return layout;
    }
  }

  /** True when the layout of this version of the file is kept (for tests). */
  static boolean kept(FileStatus status) {
    return KEPT.containsKey(key(status));
  }

  private static String key(FileStatus status) {
    return status.getPath() + "\u0000" + status.getLen() + "\u0000" + status.getModificationTime();
  }

  private static Layout of(List<BlockMetaData> groups, long length) {
    long[] starts = new long[groups.size()];
    long[] bytes = new long[groups.size()];
    long rows = 0;
    for (int g = 0; g < starts.length; g++) {
      starts[g] = groups.get(g).getStartingPos();
      bytes[g] = groups.get(g).getCompressedSize();
      rows += groups.get(g).getRowCount();
    }
    return new Layout(length, starts, bytes, rows);
  }
}
