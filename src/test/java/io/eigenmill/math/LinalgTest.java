package io.eigenmill.math;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.File;
import java.nio.charset.StandardCharsets;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * {@link Linalg}'s class initialization computes the pure-Java LAPACK's machine constants, so that no two tasks make
 * LAPACK's unsynchronised first call at once (see the comment in Linalg). Checked in a JVM of its own, where nothing
 * else has touched LAPACK yet: after loading Linalg, LAPACK's "first call" flag is down and eps is the double's
 * (eps = 2^-53, the relative machine precision LAPACK's dlamch("E") returns for rounding arithmetic: IEEE 754,
 * common practice, no source).
 */
class LinalgTest {

  /** Loads {@link Linalg} and nothing else, then prints LAPACK's first-call flag and eps. */
  public static final class FirstUse {
    public static void main(String[] args) throws Exception {
      Class.forName(Linalg.class.getName());
      System.out.println(org.netlib.lapack.Dlamch.first + " " + org.netlib.lapack.Dlamch.eps.val);
    }
  }

  @Test
  void loadingTheClassComputesLapacksMachineConstants() throws Exception {
    List<String> cmd = List.of(new File(System.getProperty("java.home"), "bin/java").getPath(), "-Xmx256m", "-cp",
        System.getProperty("java.class.path"), FirstUse.class.getName());
    Process p = new ProcessBuilder(cmd).redirectError(ProcessBuilder.Redirect.DISCARD).start();
    String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8).trim();
    assertEquals(0, p.waitFor(), out);
    assertEquals("false " + Math.pow(2, -53), out);
  }
}
