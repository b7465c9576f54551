// A repeated Ctrl-C, a second or more after the first, ends the process at
// once (cli/signals.hpp). A staged file's hidden temporary (certify
// --rows-out writes its rows there, up to gigabytes) must not stay behind
// then: the handler removes it. Each case runs in a child process, which the
// signal really ends.
#include "cli/formats/output_file.hpp"
#include "cli/signals.hpp"
#include "tests/support/temporary_directory.hpp"

#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <csignal>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <string>
#include <vector>

namespace pleat::cli {
namespace {

std::vector<std::string> names_in(const std::filesystem::path& directory) {
  std::vector<std::string> names;
  for (const auto& entry : std::filesystem::directory_iterator(directory)) names.push_back(entry.path().filename());
  return names;
}

void sleep_seconds(double seconds) {
  timespec wait{static_cast<time_t>(seconds), static_cast<long>((seconds - static_cast<long>(seconds)) * 1e9)};
  while (nanosleep(&wait, &wait) != 0) {
  }
}

// Runs `body` in a child process under an InterruptGuard, then sends it a
// Ctrl-C, and 1.1 s later a second one; returns the wait status.
template <class Body>
int status_after_two_interrupts(Body body) {
  const pid_t child = fork();
  if (child == 0) {
    const InterruptGuard guard;
    body();
    std::raise(SIGINT);  // asks for a clean stop
    sleep_seconds(1.1);
    std::raise(SIGINT);  // a second later: ends the process
    _exit(3);            // not reached
  }
  int status = 0;
  waitpid(child, &status, 0);
  return status;
}

class StagedFileKill : public test::TemporaryDirectoryTest {};

TEST_F(StagedFileKill, ARepeatedInterruptThatEndsTheProcessLeavesNoTemporaryFile) {
  const std::string path = (directory_ / "rows.txt").string();
  const int status = status_after_two_interrupts([&] {
    auto* file = new StagedFile(path);  // never destroyed: the process ends with it open
    file->write("1 2 3\n");
    if (names_in(directory_).size() != 1) _exit(4);  // the hidden temporary, made at the first write
  });
  ASSERT_TRUE(WIFSIGNALED(status)) << "the child exited with " << WEXITSTATUS(status);
  EXPECT_EQ(WTERMSIG(status), SIGINT);
  EXPECT_EQ(names_in(directory_), std::vector<std::string>{});
}

TEST_F(StagedFileKill, AnEarlierFileAtThePathIsKept) {
  const std::string path = (directory_ / "rows.txt").string();
  write_whole_file(path, "earlier\n");
  const int status = status_after_two_interrupts([&] {
    auto* file = new StagedFile(path);
    file->write("1 2 3\n");
  });
  ASSERT_TRUE(WIFSIGNALED(status));
  EXPECT_EQ(names_in(directory_), std::vector<std::string>{"rows.txt"});
}

TEST_F(StagedFileKill, AFileCommittedBeforeTheKillStays) {
  const std::string path = (directory_ / "rows.txt").string();
  const int status = status_after_two_interrupts([&] {
    StagedFile file(path);
    file.write("1 2 3\n");
    file.commit("# first line\n");  // through a second temporary file, both released
    auto* other = new StagedFile((directory_ / "other.txt").string());
    other->write("4\n");  // in a slot the committed file's two temporaries freed
  });
  ASSERT_TRUE(WIFSIGNALED(status));
  EXPECT_EQ(names_in(directory_), std::vector<std::string>{"rows.txt"});
}

}  // namespace
}  // namespace pleat::cli
