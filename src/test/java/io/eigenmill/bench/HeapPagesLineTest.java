package io.eigenmill.bench;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The benchmark header's line on heap pages. Reference: HotSpot reads its -XX flags in order and the last one
 * wins, and the kernel's transparent huge pages apply to every mapping in mode "always", to mappings that ask
 * (madvise) in mode "madvise", to none in mode "never" (Linux, Documentation/admin-guide/mm/transhuge.rst).
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
}
