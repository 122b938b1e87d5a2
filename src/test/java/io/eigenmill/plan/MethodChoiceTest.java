package io.eigenmill.plan;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The memory guard and the automatic choice of method. Array sizes are checked against their definition: a d x d
 * matrix of doubles is 8 d^2 bytes (common practice, no source).
 */
class MethodChoiceTest {
  private static final long GIB = 1L << 30;

  private static JobSettings.Reduce reduce(String extra) {
    return new SettingsReader().readString("input.path = \"/i\"\noutput.path = \"/o\"\n" + extra, List.of(), "m.conf")
        .reduce();
  }

  @Test
  void autoUsesCovarianceForModerateWidth() {
    MethodChoice.Choice c = MethodChoice.choose(reduce(""), 100, 2 * GIB, GIB);
    assertEquals(Method.COVARIANCE, c.method());
    assertTrue(c.reason().startsWith("auto: d = 100 <= reduce.covariance-max-features (4000)"), c.reason());
    assertEquals(8L * 100 * 100 + 8L * 101 * 101, c.memory().taskBytes() - 8L * 1024 * 101,
        "task: the Gram, one block's Gram with its column of ones, one block with that column");
  }

  @Test
  void autoGoesRandomizedAboveTheWidthLimitWithNoSquareArray() {
    MethodChoice.Choice c = MethodChoice.choose(reduce("reduce.components = 20\n"), 20_000, 2 * GIB, GIB);
    assertEquals(Method.RANDOMIZED, c.method());
    // l = 20 + 10 oversample: the largest array is d x l, 8 * 20000 * 30 bytes = 4.6 MiB, far below one d x d (3 GiB)
    assertTrue(c.memory().driverBytes() < 8L * 20_000 * 20_000 / 100, "driver " + c.memory().driverBytes());
    assertTrue(c.reason().contains("l = 30"), c.reason());
  }

  @Test
  void autoAvoidsACovarianceThatDoesNotFit() {
    // d = 3000: the Gram is 72 MB per task, 288 MB on the driver; with a 100 MB driver budget it cannot fit
    MethodChoice.Choice c = MethodChoice.choose(reduce(""), 3000, 100_000_000L, GIB);
    assertEquals(Method.RANDOMIZED, c.method());
    assertTrue(c.reason().contains("the d x d Gram does not fit"), c.reason());
  }

  @Test
  void aForcedMethodThatDoesNotFitFailsBeforeReadingNamingTheSetting() {
    InvalidJobException e = assertThrows(InvalidJobException.class,
        () -> MethodChoice.choose(reduce("reduce.method = covariance\n"), 3000, 100_000_000L, GIB));
    assertTrue(e.getMessage().startsWith("reduce.method = covariance: needs driver 274.7 MiB of 95.4 MiB allowed"), e.getMessage());
    assertTrue(e.getMessage().contains("raise spark.driver.memory / spark.executor.memory, or set reduce.method ="
        + " randomized (or auto)"), e.getMessage());
  }
}
