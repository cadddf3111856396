#pragma once
// Running a shell command from a test and capturing what it prints on stdout.
#include <cstdio>
#include <string>
#include <sys/wait.h>

namespace swaybound::testing {

struct CommandResult {
  bool started = false;  ///< the shell could be started
  bool exited = false;   ///< it ended with an exit status (not a signal)
  int status = -1;       ///< that exit status; -1 when it did not exit
  std::string out;       ///< everything written to stdout
};

inline CommandResult run_command(const std::string& command) {
  CommandResult r;
  FILE* pipe = ::popen(command.c_str(), "r");
  if (!pipe) return r;
  r.started = true;
  char buffer[4096];
  std::size_t n;
  while ((n = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) r.out.append(buffer, n);
  const int status = ::pclose(pipe);
  r.exited = WIFEXITED(status);
  if (r.exited) r.status = WEXITSTATUS(status);
  return r;
}

}  // namespace swaybound::testing
