package io.eigenmill.io;

import io.eigenmill.settings.Choices.OutputMode;
import io.eigenmill.settings.InvalidJobException;
import java.io.IOException;
import java.io.OutputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.UUID;
import org.apache.hadoop.fs.FileSystem;
import org.apache.hadoop.fs.Path;
import org.apache.spark.sql.SparkSession;

/**
 * Atomic output: everything is written under a hidden staging folder beside {@code output.path}; only when all of
 * it is written does a success marker go in and the staging folder get renamed to {@code output.path}. A run that
 * fails before the rename deletes its staging folder ({@link #abort}); one that is killed leaves {@code output.path}
 * untouched and a hidden {@code .NAME.staging-*} folder beside it, which holds no success marker and can be deleted. With {@code overwrite}, the old folder is moved aside,
 * the new one renamed in, and the old one deleted.
 */
public final class OutputCommit {
  /** Present in every complete output folder. */
  public static final String MARKER = "_EIGENMILL_SUCCESS";

  private final FileSystem fs;
  private final Path target;
  private final Path staging;
  private final OutputMode mode;

  private OutputCommit(FileSystem fs, Path target, Path staging, OutputMode mode) {
    this.fs = fs;
    this.target = target;
    this.staging = staging;
    this.mode = mode;
  }

  /** Checks {@code output.path} against the mode before any work is done, and creates the staging folder. */
  public static OutputCommit begin(SparkSession spark, String outputPath, OutputMode mode) {
    try {
      Path target = new Path(outputPath);
      FileSystem fs = target.getFileSystem(spark.sparkContext().hadoopConfiguration());
      target = fs.makeQualified(target);
      if (fs.exists(target) && mode == OutputMode.FAIL_IF_EXISTS) {
        throw new InvalidJobException("output.path = " + outputPath + ": already exists; set output.mode = overwrite"
            + " to replace it, or choose another path");
      }
      Path staging = new Path(target.getParent(), "." + target.getName() + ".staging-" + UUID.randomUUID());
      fs.mkdirs(staging);
      return new OutputCommit(fs, target, staging, mode);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot prepare output.path = " + outputPath, e);
    }
  }

  /** Path of a file or table inside the staging folder. */
  public String staged(String name) {
    return new Path(staging, name).toString();
  }

  public String finalPath() {
    return target.toString();
  }

  public void writeText(String name, String text) {
    try (OutputStream out = fs.create(new Path(staging, name), true)) {
      out.write(text.getBytes(StandardCharsets.UTF_8));
    } catch (IOException e) {
      throw new UncheckedIOException("cannot write " + name + " under " + staging, e);
    }
  }

  /** Marks the staging folder complete and moves it to {@code output.path}. */
  /** Deletes a file or folder from the staging folder (work files that are not outputs). */
  public void delete(String name) {
    try {
      fs.delete(new Path(staging, name), true);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot delete " + name + " from the staging folder " + staging, e);
    }
  }

  public void commit() {
    try {
      writeText(MARKER, "");
      Path aside = null;
      if (fs.exists(target)) {
        if (mode != OutputMode.OVERWRITE) {
          throw new InvalidJobException("output.path = " + target + ": appeared while the job ran;"
              + " set output.mode = overwrite to replace it");
        }
        aside = new Path(target.getParent(), "." + target.getName() + ".replaced-" + UUID.randomUUID());
        rename(target, aside);
      }
      rename(staging, target);
      if (aside != null) {
        fs.delete(aside, true);
      }
    } catch (IOException e) {
      throw new UncheckedIOException("cannot move " + staging + " to " + target, e);
    }
  }

  private void rename(Path from, Path to) throws IOException {
    if (!fs.rename(from, to)) {
      throw new IOException("rename of " + from + " to " + to + " failed");
    }
  }

  /** Deletes the staging folder; {@code output.path} is unchanged. */
  public void abort() {
    try {
      fs.delete(staging, true);
    } catch (IOException e) {
      // the staging folder is hidden; a failure to clean it must not hide the job's own error
    }
  }
}
