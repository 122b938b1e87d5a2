package io.eigenmill.bench;

import com.sun.management.HotSpotDiagnosticMXBean;
import io.eigenmill.math.Linalg;
import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;

/**
 * The machine a benchmark ran on: cores, memory and CPU model (from /proc on Linux; "unknown" elsewhere), the Java
 * runtime, the JVM's maximum heap and the BLAS/LAPACK in use.
 */
public record Machine(int cores, long memoryBytes, String cpu, String java, String blas, long maxHeapBytes) {

  public static Machine describe() {
    return new Machine(Runtime.getRuntime().availableProcessors(), totalMemory(), cpuModel(),
        System.getProperty("java.vm.name") + " " + System.getProperty("java.runtime.version"), Linalg.describe(),
        maxHeap());
  }

  /**
   * The heap's maximum as the JVM was given it ({@code MaxHeapSize}, which -Xmx sets). Under the parallel collector
   * {@code Runtime.maxMemory()} reads below it (7.1 GiB for -Xmx8g here), so that is the fallback only.
   */
  static long maxHeap() {
    try {
      return Long.parseLong(ManagementFactory.getPlatformMXBean(HotSpotDiagnosticMXBean.class)
          .getVMOption("MaxHeapSize").getValue());
    } catch (RuntimeException e) {
      return Runtime.getRuntime().maxMemory();
    }
  }

  /** The 1, 5 and 15 minute load averages now, or "unknown". */
  public static String loadAverage() {
    List<String> lines = lines(Path.of("/proc/loadavg"));
    if (lines.isEmpty()) {
      return "unknown";
    }
    String[] f = lines.get(0).trim().split("\\s+");
    return f.length >= 3 ? f[0] + " " + f[1] + " " + f[2] : "unknown";
  }

  public String describeHardware() {
    return cores + " cores, " + (memoryBytes > 0 ? Report.bytes(memoryBytes) : "unknown") + " memory, " + cpu;
  }

  private static long totalMemory() {
    for (String line : lines(Path.of("/proc/meminfo"))) {
      if (line.startsWith("MemTotal:")) {
        String[] f = line.trim().split("\\s+");
        try {
          return Long.parseLong(f[1]) * 1024L;
        } catch (RuntimeException e) {
          return -1;
        }
      }
    }
    return -1;
  }

  private static String cpuModel() {
    for (String line : lines(Path.of("/proc/cpuinfo"))) {
      if (line.toLowerCase(Locale.ROOT).startsWith("model name")) {
        int colon = line.indexOf(':');
        return colon >= 0 ? line.substring(colon + 1).trim() : line.trim();
      }
    }
    return "unknown CPU model";
  }

  private static List<String> lines(Path p) {
    try {
      return Files.isReadable(p) ? Files.readAllLines(p) : List.of();
    } catch (IOException e) {
      return List.of();
    }
  }
}
