package io.eigenmill.testing;

import io.eigenmill.cli.Main;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.util.List;

/** The command line run in this JVM ({@link Main#run}), with what it printed. */
public record CommandRun(int code, String out, String err) {
  public static CommandRun of(String... args) {
    ByteArrayOutputStream out = new ByteArrayOutputStream();
    ByteArrayOutputStream err = new ByteArrayOutputStream();
    int code = Main.run(args, new PrintStream(out, true, StandardCharsets.UTF_8),
        new PrintStream(err, true, StandardCharsets.UTF_8));
    return new CommandRun(code, out.toString(StandardCharsets.UTF_8), err.toString(StandardCharsets.UTF_8));
  }

  public static CommandRun of(List<String> args) {
    return of(args.toArray(String[]::new));
  }
}
