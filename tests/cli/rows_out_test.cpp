// certify --rows-out's file (cli/commands/certify_files.hpp) when its
// directory is gone by the time the first rows come: certify tried the path
// before the run (refuse_unwritable_output), but the hidden temporary file
// is made at the first write, after the walk and the proof. That failure
// ended certify (an input_error out of the rows phase: no result printed,
// exit 2) where a full disk there only drops the file; both must leave the
// run going and fail at the end, once its result is printed.
#include "cli/commands/certify_files.hpp"
#include "cli/formats/output_file.hpp"
#include "core/errors.hpp"
#include "tests/support/temporary_directory.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <string>

namespace pleat::cli {
namespace {

class RowsOutFile : public test::TemporaryDirectoryTest {};

RationalMatrix one_region_rows() {
  RationalMatrix rows(2, 3);
  rows(0, 0) = Rational(1, 2);
  rows(1, 2) = Rational(-3);
  return rows;
}

TEST_F(RowsOutFile, ADirectoryGoneBeforeTheFirstRowsDropsTheFileAndFailsOnlyAtTheEnd) {
  const std::filesystem::path gone = directory_ / "gone";
  std::filesystem::create_directory(gone);
  const std::string path = (gone / "rows.txt").string();
  refuse_unwritable_output(path);  // fine before the run
  RowsOut rows(path);
  std::filesystem::remove(gone);  // then the directory goes
  bool wants_more = true;
  EXPECT_NO_THROW(wants_more = rows.add(one_region_rows()));  // the run goes on
  EXPECT_FALSE(wants_more);  // but forms no more rows for a file dropped
  EXPECT_FALSE(rows.add(one_region_rows()));
  FunctionalDimensionResult result;
  result.certified = true;
  try {
    rows.finish(result);
    FAIL() << "finish did not say that the rows file was not written";
  } catch (const output_error& error) {  // exit 1: the input was fine
    const std::string message = error.what();
    EXPECT_NE(message.find(path + ": cannot open for writing"), std::string::npos) << message;
    EXPECT_NE(message.find("no rows file written (the printed result stands)"), std::string::npos) << message;
  }
  EXPECT_FALSE(std::filesystem::exists(gone));
}

TEST_F(RowsOutFile, AWritablePathIsTriedBeforeTheRunAndLeftAsItWas) {
  const std::string path = (directory_ / "rows.txt").string();
  refuse_unwritable_output(path);
  EXPECT_TRUE(std::filesystem::is_empty(directory_));  // no file, hidden or not, left behind
  write_whole_file(path, "earlier\n");
  refuse_unwritable_output(path);
  EXPECT_EQ(std::filesystem::file_size(path), 8u);
  EXPECT_EQ(std::distance(std::filesystem::directory_iterator(directory_), std::filesystem::directory_iterator()), 1);
}

TEST_F(RowsOutFile, AMissingDirectoryOrADirectoryIsRefusedBeforeTheRun) {
  const std::string missing = (directory_ / "none" / "rows.txt").string();
  try {
    refuse_unwritable_output(missing);
    FAIL() << "a path in a missing directory was not refused";
  } catch (const input_error& error) {
    EXPECT_NE(std::string(error.what()).find(missing + ": cannot open for writing (No such file"), std::string::npos)
        << error.what();
  }
  EXPECT_THROW(refuse_unwritable_output(directory_.string()), input_error);
  EXPECT_NO_THROW(refuse_unwritable_output("-"));
  EXPECT_NO_THROW(refuse_unwritable_output("/dev/null"));
}

}  // namespace
}  // namespace pleat::cli
