package io.eigenmill.bench;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The benchmark header's line on heap pages and on the collector. Reference: HotSpot reads its -XX flags in order
 * and the last one wins, and the kernel's transparent huge pages apply to every mapping in mode "always", to
 * mappings that ask (madvise) in mode "madvise", to none in mode "never" (Linux,
 * Documentation/admin-guide/mm/transhuge.rst).
 */
class HeapPagesLineTest {
  @Test
  void theLineFollowsTheKernelModeAndTheLastFlag() {
    List<String> asked = List.of("-Xmx8g", "-XX:+UseTransparentHugePages");
    assertEquals("transparent huge pages (kernel mode madvise, -XX:+UseTransparentHugePages)",
        Report.heapPages(asked, "madvise"));
    assertEquals("4 KiB pages (kernel mode madvise)", Report.heapPages(List.of("-Xmx8g"), "madvise"));
    assertEquals("4 KiB pages (kernel mode madvise)",
        Report.heapPages(List.of("-XX:+UseTransparentHugePages", "-XX:-UseTransparentHugePages"), "madvise"));
    assertEquals("transparent huge pages (kernel mode always)", Report.heapPages(List.of(), "always"));
    assertEquals("4 KiB pages (kernel mode never, -XX:+UseTransparentHugePages)",
        Report.heapPages(asked, "never"));
    assertEquals("default", Report.heapPages(List.of(), null));
  }

  /**
   * The collector's name from its beans' names, as Java 17 (OpenJDK 17.0.15 here) names them, printed by
   * {@code ManagementFactory.getGarbageCollectorMXBeans()} under each -XX:+Use...GC flag on this machine.
   */
  @Test
  void theCollectorFollowsItsBeans() {
    assertEquals("parallel", Report.collector(List.of("PS MarkSweep", "PS Scavenge")));
    assertEquals("G1", Report.collector(List.of("G1 Young Generation", "G1 Old Generation")));
    assertEquals("serial", Report.collector(List.of("Copy", "MarkSweepCompact")));
    assertEquals("Z", Report.collector(List.of("ZGC Cycles", "ZGC Pauses")));
    assertEquals("Shenandoah", Report.collector(List.of("Shenandoah Pauses", "Shenandoah Cycles")));
    assertEquals("Epsilon; Other", Report.collector(List.of("Epsilon", "Other")));
    assertEquals("unknown", Report.collector(List.of()));
    String here = Report.collector(java.lang.management.ManagementFactory.getGarbageCollectorMXBeans().stream()
        .map(java.lang.management.GarbageCollectorMXBean::getName).toList());
    assertTrue(List.of("parallel", "G1", "serial", "Z", "Shenandoah").contains(here), here);
  }
}
