// A GoogleTest fixture whose tests each get a fresh directory under the
// system's temporary directory, removed with everything in it afterwards (for
// tests of files the CLI writes, stages and removes). Header-only; include as
// "tests/support/temporary_directory.hpp".
#pragma once

#include <gtest/gtest.h>
#include <stdlib.h>

#include <filesystem>
#include <string>

namespace pleat::test {

class TemporaryDirectoryTest : public ::testing::Test {
 protected:
  void SetUp() override {
    std::string pattern = (std::filesystem::temp_directory_path() / "pleat_test_XXXXXX").string();
    ASSERT_NE(mkdtemp(pattern.data()), nullptr);
    directory_ = pattern;
  }
  void TearDown() override { std::filesystem::remove_all(directory_); }
  std::filesystem::path directory_;
};

}  // namespace pleat::test
