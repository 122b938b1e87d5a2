package io.eigenmill.bench;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import jdk.jfr.Recording;
import jdk.jfr.consumer.RecordedEvent;
import jdk.jfr.consumer.RecordedFrame;
import jdk.jfr.consumer.RecordingFile;

/**
 * Records every allocation made outside a thread-local allocation buffer (JFR event
 * {@code jdk.ObjectAllocationOutsideTLAB}) while it runs, and reports the largest one with its type and the code
 * that made it, and how many reached a threshold. Every array of more than a few MiB is allocated outside a TLAB,
 * so a d x d array of doubles for d >= 1000 (8 MB or more) cannot escape the record.
 */
final class LargeAllocations implements AutoCloseable {
  static final String EVENT = "jdk.ObjectAllocationOutsideTLAB";

  private final Recording recording;

  /**
   * @param largestBytes size of the largest single allocation
   * @param largestType its type, e.g. double[]
   * @param largestWhere the innermost eigenmill frame that made it (else the innermost frame)
   * @param atLeastThreshold allocations of at least the threshold
   * @param events allocations recorded
   */
  record Summary(long largestBytes, String largestType, String largestWhere, long atLeastThreshold, long events) {}

  private LargeAllocations() {
    recording = new Recording();
    recording.setName("eigenmill-bench-allocations");
    recording.enable(EVENT).withStackTrace();
    recording.setToDisk(true);
  }

  static LargeAllocations start() {
    LargeAllocations a = new LargeAllocations();
    a.recording.start();
    return a;
  }

  /** Stops the recording and summarises it against {@code thresholdBytes}. */
  Summary stop(long thresholdBytes) {
    recording.stop();
    Path file = null;
    try {
      file = Files.createTempFile("eigenmill-bench-", ".jfr");
      recording.dump(file);
      long largest = -1;
      String type = "none";
      String where = "";
      long atLeast = 0;
      long events = 0;
      for (RecordedEvent e : RecordingFile.readAllEvents(file)) {
        if (!e.getEventType().getName().equals(EVENT)) {
          continue;
        }
        events++;
        long size = e.getLong("allocationSize");
        atLeast += size >= thresholdBytes ? 1 : 0;
        if (size > largest) {
          largest = size;
          type = typeName(e.getClass("objectClass").getName());
          where = where(e);
        }
      }
      return new Summary(Math.max(0, largest), type, where, atLeast, events);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot read the allocation recording", e);
    } finally {
      if (file != null) {
        file.toFile().delete();
      }
    }
  }

  private static String where(RecordedEvent e) {
    if (e.getStackTrace() == null) {
      return "";
    }
    String first = "";
    for (RecordedFrame f : e.getStackTrace().getFrames()) {
      String name = f.getMethod().getType().getName() + "." + f.getMethod().getName();
      if (first.isEmpty()) {
        first = name;
      }
      if (name.startsWith("io.eigenmill.") && !name.startsWith("io.eigenmill.bench.")) {
        return name;
      }
    }
    return first;
  }

  /** "double[]" for "[D", and so on; other names unchanged. */
  static String typeName(String jvmName) {
    int dims = 0;
    while (dims < jvmName.length() && jvmName.charAt(dims) == '[') {
      dims++;
    }
    if (dims == 0) {
      return jvmName;
    }
    String rest = jvmName.substring(dims);
    String base = switch (rest) {
      case "D" -> "double";
      case "F" -> "float";
      case "J" -> "long";
      case "I" -> "int";
      case "S" -> "short";
      case "B" -> "byte";
      case "C" -> "char";
      case "Z" -> "boolean";
      default -> rest.startsWith("L") && rest.endsWith(";") ? rest.substring(1, rest.length() - 1) : rest;
    };
    return base + "[]".repeat(dims);
  }

  @Override
  public void close() {
    recording.close();
  }
}
