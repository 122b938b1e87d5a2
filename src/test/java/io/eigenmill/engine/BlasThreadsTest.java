package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.Linalg;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import org.junit.jupiter.api.Test;

/**
 * The warning about OpenBLAS threads inside Spark's tasks. Which variables a build reads, in which order: OpenBLAS's
 * documentation of its environment variables (pthreads builds: OPENBLAS_NUM_THREADS, then GOTO_NUM_THREADS, then
 * OMP_NUM_THREADS; OpenMP builds: OMP_NUM_THREADS); the order of the first two recalled from memory of OpenBLAS's
 * source. The lines of /proc/self/maps: proc(5).
 */
class BlasThreadsTest extends SparkSuite {
  private static final String PTHREADS = String.join("\n",
      "7f1c2a000000-7f1c2a021000 rw-p 00000000 00:00 0",
      "7f1c2b400000-7f1c2b42a000 r--p 00000000 fe:01 1311 /usr/lib/x86_64-linux-gnu/openblas-pthread/libblas.so.3",
      "7f1c2b600000-7f1c2b7ff000 r-xp 00000000 fe:01 1312 "
          + "/usr/lib/x86_64-linux-gnu/openblas-pthread/libopenblasp-r0.3.21.so",
      "7ffd1c5e0000-7ffd1c601000 rw-p 00000000 00:00 0                          [stack]");
  private static final String OPENMP = PTHREADS.replace("openblas-pthread", "openblas-openmp");
  private static final String SERIAL = PTHREADS.replace("openblas-pthread", "openblas-serial")
      .replace("libopenblasp", "libopenblas");
  private static final String REFERENCE = "7f1c2b400000-7f1c2b42a000 r--p 00000000 fe:01 1311 "
      + "/usr/lib/x86_64-linux-gnu/blas/libblas.so.3";

  @Test
  void aThreadedOpenBlasWithoutThreadSettingIsNamedWithTheVariableToSet() {
    String w = BlasThreads.warning(PTHREADS, Map.of(), 2);
    assertNotNull(w);
    // the library itself, not the first file of its directory
    assertTrue(w.contains("OpenBLAS (/usr/lib/x86_64-linux-gnu/openblas-pthread/libopenblasp-r0.3.21.so)"), w);
    assertEquals("/usr/lib/x86_64-linux-gnu/openblas-pthread/libblas.so.3",
        BlasThreads.threadedOpenBlas(PTHREADS.lines().filter(l -> !l.contains("libopenblasp")).reduce("",
            (a, b) -> a + b + "\n")));
    assertTrue(w.contains("OPENBLAS_NUM_THREADS, GOTO_NUM_THREADS, OMP_NUM_THREADS unset"), w);
    assertTrue(w.contains("each of the 2 Spark tasks"), w);
    assertTrue(w.contains("set OPENBLAS_NUM_THREADS=1"), w);
  }

  @Test
  void theFirstVariableSetDecides() {
    assertNull(BlasThreads.warning(PTHREADS, Map.of("OPENBLAS_NUM_THREADS", "1"), 8));
    assertNull(BlasThreads.warning(PTHREADS, Map.of("GOTO_NUM_THREADS", "1"), 8));
    assertNull(BlasThreads.warning(PTHREADS, Map.of("OMP_NUM_THREADS", " 1 "), 8));
    String w = BlasThreads.warning(PTHREADS, Map.of("OPENBLAS_NUM_THREADS", "4", "OMP_NUM_THREADS", "1"), 8);
    assertNotNull(w);
    assertTrue(w.contains("OPENBLAS_NUM_THREADS = 4"), w);
    assertNull(BlasThreads.warning(PTHREADS, Map.of("OPENBLAS_NUM_THREADS", "1", "OMP_NUM_THREADS", "8"), 8));
  }

  @Test
  void anOpenMpBuildReadsOnlyOmpNumThreads() {
    String w = BlasThreads.warning(OPENMP, Map.of("OPENBLAS_NUM_THREADS", "1"), 4);
    assertNotNull(w, "an OpenMP build ignores OPENBLAS_NUM_THREADS");
    assertTrue(w.contains("set OMP_NUM_THREADS=1"), w);
    assertNull(BlasThreads.warning(OPENMP, Map.of("OMP_NUM_THREADS", "1"), 4));
  }

  @Test
  void noWarningWithoutThreadsOrWithOneTaskAtATime() {
    assertNull(BlasThreads.warning(SERIAL, Map.of(), 8), "the single-threaded build");
    assertNull(BlasThreads.warning(REFERENCE, Map.of(), 8), "another BLAS");
    assertNull(BlasThreads.warning(PTHREADS, Map.of(), 1), "one task slot");
    assertEquals(null, BlasThreads.threadedOpenBlas(""));
  }

  @Test
  void thisJvmListsItsBlasAndTheSuiteSetsOneThread() throws Exception {
    // the build runs the suite with OPENBLAS_NUM_THREADS=1 (pom.xml), so this session gets no warning
    assertEquals("1", System.getenv("OPENBLAS_NUM_THREADS"));
    assertNull(BlasThreads.warning(spark));
    if (Linalg.isNative()) {
      String maps = Files.readString(Path.of("/proc/self/maps"));
      assertTrue(maps.contains("libblas.so.3") || maps.contains("openblas"),
          "a native BLAS is loaded, so the JVM's maps list it");
      if (maps.contains("openblas-pthread")) {
        assertNotNull(BlasThreads.warning(maps, Map.of(), 2), "the loaded pthreads OpenBLAS is found");
      }
    }
  }
}
