package io.eigenmill.testing;

import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;

/** Small helpers to build job settings and scratch folders in tests. */
public final class JobFiles {
  private JobFiles() {}

  public static JobSettings settings(String hocon) {
    return new SettingsReader().readString(hocon, List.of(), "test.conf");
  }

  public static Path scratch(String prefix) {
    try {
      return Files.createTempDirectory("eigenmill-" + prefix + "-");
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  public static String quoted(List<String> names) {
    return "[" + String.join(", ", names.stream().map(n -> "\"" + n + "\"").toList()) + "]";
  }
}
