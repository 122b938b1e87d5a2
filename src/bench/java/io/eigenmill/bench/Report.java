package io.eigenmill.bench;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.lang.management.GarbageCollectorMXBean;
import java.lang.management.ManagementFactory;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.ZoneOffset;
import java.time.ZonedDateTime;
import java.time.format.DateTimeFormatter;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The results file: markdown with one section per kind of run (main, scaling, wide, windows, groups, long, tables,
 * process) between marker comments. A run replaces its own sections and keeps the others, so that the main run, the
 * scaling run and the wide run (which needs its own JVM) can all land in one file; text after the last section
 * (notes on the figures) is kept too. Also the shared formatting helpers.
 */
final class Report {
  static final List<String> SECTIONS = List.of("main", "scaling", "wide", "windows", "groups", "long",
      "tables", "process");
  private static final Pattern SECTION = Pattern.compile(
      "<!-- bench:([a-z]+) -->\\n(.*?)<!-- /bench:\\1 -->", Pattern.DOTALL);
  private static final String TITLE = String.join("\n",
      "# eigenmill benchmarks",
      "",
      "Written by `local-demo/bench` (see the README, \"Benchmark\"). Each section is replaced by the run that "
          + "produces it; the header of each section says when, where and with which command it ran.",
      "");

  private Report() {}

  /**
   * Replaces (or adds) {@code section} of {@code file} with {@code body}, keeping the other sections and the text
   * written after the last section.
   */
  static void writeSection(Path file, String section, String body) {
    Map<String, String> bodies = new LinkedHashMap<>();
    String notes = "";
    try {
      if (Files.isRegularFile(file)) {
        String text = Files.readString(file, StandardCharsets.UTF_8);
        Matcher m = SECTION.matcher(text);
        int end = -1;
        while (m.find()) {
          bodies.put(m.group(1), m.group(2));
          end = m.end();
        }
        // what people wrote after the last section (the analysis of the figures) stays
        notes = end < 0 ? "" : text.substring(end).strip();
      }
      bodies.put(section, body.endsWith("\n") ? body : body + "\n");
      StringBuilder s = new StringBuilder(TITLE);
      for (String name : SECTIONS) {
        if (bodies.containsKey(name)) {
          s.append("\n<!-- bench:").append(name).append(" -->\n").append(bodies.get(name))
              .append("<!-- /bench:").append(name).append(" -->\n");
        }
      }
      if (!notes.isEmpty()) {
        s.append('\n').append(notes).append('\n');
      }
      if (file.getParent() != null) {
        Files.createDirectories(file.getParent());
      }
      Files.writeString(file, s.toString(), StandardCharsets.UTF_8);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot write the results to " + file, e);
    }
  }

  /**
   * How this JVM's heap is paged, for the header (timings with and without huge pages differ by 2-3x here): the
   * kernel's transparent-huge-page mode ({@code kernel}: always, madvise, never, or null when unknown) and whether the
   * JVM asked for them ({@code -XX:+UseTransparentHugePages}, the last such flag winning, as the JVM reads them).
   */
  static String heapPages(List<String> jvmArguments, String kernel) {
    boolean asked = false;
    for (String a : jvmArguments) {
      if (a.equals("-XX:+UseTransparentHugePages")) {
        asked = true;
      } else if (a.equals("-XX:-UseTransparentHugePages")) {
        asked = false;
      }
    }
    if (kernel == null) {
      return asked ? "-XX:+UseTransparentHugePages, kernel mode unknown" : "default";
    }
    boolean huge = kernel.equals("always") || (kernel.equals("madvise") && asked);
    return (huge ? "transparent huge pages" : "4 KiB pages") + " (kernel mode " + kernel
        + (asked ? ", -XX:+UseTransparentHugePages" : "") + ")";
  }

  /**
   * The collector named by this JVM's collector beans ({@code GarbageCollectorMXBean} names): parallel, G1, serial,
   * Z or Shenandoah, else the names themselves.
   */
  static String collector(List<String> beanNames) {
    String all = String.join("; ", beanNames);
    if (beanNames.contains("PS Scavenge") || beanNames.contains("PS MarkSweep")) {
      return "parallel";
    }
    if (all.startsWith("G1 ")) {
      return "G1";
    }
    if (beanNames.contains("Copy") || beanNames.contains("MarkSweepCompact")) {
      return "serial";
    }
    if (all.startsWith("ZGC")) {
      return "Z";
    }
    if (all.startsWith("Shenandoah")) {
      return "Shenandoah";
    }
    return all.isEmpty() ? "unknown" : all;
  }

  /** The bracketed mode of /sys/kernel/mm/transparent_hugepage/enabled, or null. */
  static String kernelHugePages() {
    try {
      String s = Files.readString(Path.of("/sys/kernel/mm/transparent_hugepage/enabled"));
      int a = s.indexOf('[');
      int b = s.indexOf(']', a + 1);
      return a >= 0 && b > a ? s.substring(a + 1, b) : null;
    } catch (IOException | RuntimeException e) {
      return null;
    }
  }

  /** The header lines every section starts with. */
  static List<String> header(Machine machine, BenchOptions options, String loadBefore, String loadAfter) {
    List<String> lines = new ArrayList<>();
    lines.add("- date: " + ZonedDateTime.now(ZoneOffset.UTC).format(DateTimeFormatter.ofPattern(
        "yyyy-MM-dd HH:mm 'UTC'", Locale.ROOT)));
    lines.add("- machine: " + machine.describeHardware());
    String pages = heapPages(ManagementFactory.getRuntimeMXBean().getInputArguments(), kernelHugePages());
    String gc = collector(ManagementFactory.getGarbageCollectorMXBeans().stream()
        .map(GarbageCollectorMXBean::getName).toList());
    lines.add("- Java: " + machine.java() + "; JVM heap (-Xmx) " + bytes(machine.maxHeapBytes())
        + "; heap pages: " + pages + "; collector: " + gc + "; Spark " + io.eigenmill.Version.spark() + " (Scala "
        + io.eigenmill.Version.scala() + ") local[" + options.cores() + "]");
    lines.add("- BLAS/LAPACK: " + machine.blas());
    lines.add("- load average (1, 5, 15 min) at start: " + loadBefore + "; at end: " + loadAfter);
    lines.add("- command: `" + options.command() + "`");
    lines.add("- repetitions: " + options.repetitions() + " timed" + (options.warmups() > 0 ? " after "
        + options.warmups() + " untimed warm-up" : ", no warm-up") + " per case; wall seconds; a full GC before "
        + "each timed repetition");
    return lines;
  }

  /** A markdown table. Cells are escaped. */
  static String table(List<String> heads, List<List<String>> rows) {
    StringBuilder s = new StringBuilder();
    row(s, heads);
    List<String> rule = new ArrayList<>();
    heads.forEach(h -> rule.add("---"));
    row(s, rule);
    rows.forEach(r -> row(s, r));
    return s.toString();
  }

  private static void row(StringBuilder s, List<String> cells) {
    s.append('|');
    for (String c : cells) {
      s.append(' ').append(c.replace("|", "\\|").replace("\n", " ")).append(" |");
    }
    s.append('\n');
  }

  /** Three significant digits, plain notation from 0.001 to 99,999. */
  static String number(double v) {
    if (Double.isNaN(v)) {
      return "n/a";
    }
    double a = Math.abs(v);
    if (a != 0 && (a < 1e-3 || a >= 1e5)) {
      return String.format(Locale.ROOT, "%.3g", v);
    }
    if (a >= 100) {
      return String.format(Locale.ROOT, "%.0f", v);
    }
    return String.format(Locale.ROOT, a >= 10 ? "%.1f" : a >= 1 ? "%.2f" : "%.3f", v);
  }

  static String seconds(double v) {
    return String.format(Locale.ROOT, "%.3f", v);
  }

  static String bytes(long b) {
    if (b < 0) {
      return "unknown";
    }
    return io.eigenmill.plan.MemoryEstimate.human(b);
  }
}
