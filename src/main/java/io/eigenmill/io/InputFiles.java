package io.eigenmill.io;

import io.eigenmill.settings.Choices.CorruptFiles;
import io.eigenmill.settings.Choices.InputFormat;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import org.apache.hadoop.conf.Configuration;
import org.apache.hadoop.fs.FileStatus;
import org.apache.hadoop.fs.FileSystem;
import org.apache.hadoop.fs.LocatedFileStatus;
import org.apache.hadoop.fs.Path;
import org.apache.hadoop.fs.RemoteIterator;
import org.apache.spark.sql.SparkSession;

/**
 * The Parquet files of an input and those whose footer cannot be read (truncated, empty, not Parquet, a garbled
 * footer), checked before any data is read so that {@code input.corrupt-files} can act on them by name.
 *
 * <p>Lists the input like Spark does (recursively, partition folders included, names starting with {@code _} or
 * {@code .} ignored) and opens every footer: the last bytes of each file, no data pages. The footers are read on the
 * driver by {@link #THREADS} threads, so the cost is one small read per file (on object stores, one request).
 * A file whose footer is sound but whose data pages are damaged is not found here; with {@code skip} Spark's own
 * {@code ignoreCorruptFiles} (set by {@link TableLoader}) leaves such a file out while reading.
 */
public final class InputFiles {
  /** Footer reads in flight at once. */
  static final int THREADS = 8;

  private InputFiles() {}

  /** A file whose footer cannot be read and why (the reader's message, without the path). */
  public record Unreadable(String path, String reason) {}

  /**
   * The outcome of {@link #check}: the Parquet files of the input whose footers read ({@code readable}, in path
   * order) and those that cannot be read.
   */
  public record Check(String input, List<String> readable, List<Unreadable> unreadable) {
    public Check {
      readable = List.copyOf(readable);
      unreadable = List.copyOf(unreadable);
    }

    /** All Parquet files of the input, readable or not. */
    public int files() {
      return readable.size() + unreadable.size();
    }

    /**
     * The warning of a run that skips unreadable files ({@code input.corrupt-files = skip}), e.g. "input.corrupt-files
     * = skip: 1 of 8 Parquet files skipped, they cannot be read: PATH (REASON)"; empty when every file is readable.
     */
    public String skipWarning() {
      if (unreadable.isEmpty()) {
        return "";
      }
      return "input.corrupt-files = skip: " + count() + " skipped, they cannot be read: " + list();
    }

    String count() {
      return String.format(Locale.ROOT, "%d of %d Parquet file%s", unreadable.size(), files(),
          files() == 1 ? "" : "s");
    }

    String list() {
      List<String> parts = new ArrayList<>();
      for (Unreadable u : unreadable) {
        parts.add(u.path() + " (" + u.reason() + ")");
      }
      return String.join("; ", parts);
    }
  }

  /**
   * Applies {@code input.corrupt-files} to a Parquet input: with {@code fail} (the default) any unreadable file is an
   * {@link InvalidJobException} that names every such file (the command line exits with 2 before anything is
   * computed or written); with {@code skip} the check is returned so its {@link Check#skipWarning()} can be reported.
   * A CSV input is not checked (an empty check is returned).
   */
  public static Check check(SparkSession spark, JobSettings.Input input) {
    if (input.format() != InputFormat.PARQUET || input.fromTable()) {
      // a catalog table's files are the catalog's: its format reads and checks them
      return new Check(input.source(), List.of(), List.of());
    }
    TableLoader.requireExists(spark, "input.path", input.path());
    Check check = scan(spark.sparkContext().hadoopConfiguration(), input.path());
    if (!check.unreadable().isEmpty() && input.corruptFiles() == CorruptFiles.FAIL) {
      throw new InvalidJobException("input.path = " + input.path() + ": " + check.count() + " cannot be read: "
          + check.list() + "; fix or remove " + (check.unreadable().size() == 1 ? "it" : "them")
          + ", or set input.corrupt-files = skip to leave unreadable files out");
    }
    return check;
  }

  /** Lists the Parquet files under {@code path} and reads every footer; never throws for an unreadable file. */
  public static Check scan(Configuration conf, String path) {
    List<FileStatus> files = statuses(conf, path);
    List<String> readable = new ArrayList<>();
    List<Unreadable> unreadable = new ArrayList<>();
    ExecutorService pool = Executors.newFixedThreadPool(Math.max(1, Math.min(THREADS, files.size())), r -> {
      Thread t = new Thread(r, "eigenmill-footers");
      t.setDaemon(true);
      return t;
    });
    try {
      List<Future<String>> reasons = new ArrayList<>();
      for (FileStatus file : files) {
        reasons.add(pool.submit(() -> footerProblem(conf, file)));
      }
      for (int i = 0; i < files.size(); i++) {
        String reason = reasons.get(i).get();
        if (reason == null) {
          readable.add(files.get(i).getPath().toString());
        } else {
          unreadable.add(new Unreadable(files.get(i).getPath().toString(), reason));
        }
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted while reading the footers under " + path, e);
    } catch (ExecutionException e) {
      throw new IllegalStateException("cannot read the footers under " + path, e.getCause());
    } finally {
      pool.shutdownNow();
    }
    return new Check(path, readable, unreadable);
  }

  /** Null when the footer reads (its layout is then kept, {@link FooterLayouts}); otherwise why not. */
  static String footerProblem(Configuration conf, FileStatus file) {
    try {
      FooterLayouts.read(conf, file);
      return null;
    } catch (IOException | RuntimeException e) {
      return reason(file.getPath(), e);
    }
  }

  /** The reader's message without the file's own path (the caller names the file once). */
  static String reason(Path file, Throwable e) {
    String message = String.valueOf(e.getMessage());
    int nl = message.indexOf('\n');
    if (nl >= 0) {
      message = message.substring(0, nl);
    }
    for (String form : List.of(file.toString(), file.toUri().getPath())) {
      message = message.replace(form + " ", "").replace(form, "");
    }
    message = message.trim();
    return message.isEmpty() ? e.getClass().getSimpleName() : message;
  }

  /**
   * The data files under {@code path} (their statuses) in path order, skipping hidden and bookkeeping names as Spark
   * does.
   */
  static List<FileStatus> statuses(Configuration conf, String path) {
    try {
      Path root = new Path(path);
      FileSystem fs = root.getFileSystem(conf);
      FileStatus status = fs.getFileStatus(root);
      List<FileStatus> out = new ArrayList<>();
      if (!status.isDirectory()) {
        out.add(fs.getFileStatus(fs.makeQualified(root)));
        return out;
      }
      RemoteIterator<LocatedFileStatus> it = fs.listFiles(root, true);
      String rootPath = fs.makeQualified(root).toUri().getPath();
      while (it.hasNext()) {
        LocatedFileStatus f = it.next();
        if (f.isFile() && !hiddenBelow(rootPath, f.getPath())) {
          out.add(f);
        }
      }
      out.sort(java.util.Comparator.comparing(FileStatus::getPath));
      return out;
    } catch (IOException e) {
      throw new UncheckedIOException("cannot list input.path = " + path, e);
    }
  }

  /** True when a path segment below the root is hidden ({@code .x}, {@code _x} but not {@code _x=y}, copying). */
  static boolean hiddenBelow(String rootPath, Path file) {
    String p = file.toUri().getPath();
    String rest = p.startsWith(rootPath) ? p.substring(rootPath.length()) : file.getName();
    for (String segment : rest.split("/")) {
      if (segment.isEmpty()) {
        continue;
      }
      if (segment.startsWith(".") || (segment.startsWith("_") && !segment.contains("="))
          || segment.endsWith("._COPYING_")) {
        return true;
      }
    }
    return false;
  }
}
