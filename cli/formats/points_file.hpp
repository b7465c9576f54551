// Reading and writing files of input points, as researchers write them:
//   text  one point per line; values separated by commas or by whitespace
//         (what pandas' to_csv and numpy.savetxt write); an optional header
//         line of column names (a first column with an empty name is pandas'
//         index and is dropped); blank lines and lines starting with '#'
//         skipped. Every value is read exactly as the rational it spells
//         ("1.000000000000000000e+00", "-1/3").
//   .npy  a 2-D (points x inputs) or, for one input, 1-D float64 or float32
//         array (numpy.save); every double is read as the dyadic rational it is.
// Bad input throws pleat::input_error naming the file and line (or, for .npy,
// the row).
#pragma once

#include "core/rational.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace pleat::cli {

struct PointsFile {
  std::vector<RationalVector> points;
  // One per point, for messages: "pts.csv:4 (point 3)" (its line; points
  // counted from 1, as lines are) or "pts.npy[2] (point 3)" (numpy's index).
  std::vector<std::string> places;
};

// Reads a points file (by extension: .npy binary, anything else text).
// Precondition: dimension >= 1. Throws input_error for an unreadable file, a
// bad value, a point with the wrong number of coordinates, or no points.
PointsFile read_points_file(const std::string& path, std::size_t dimension);

// One point per line, exact, comma-separated ("1/3,-2"): what read_points_file
// and 'pleat certify --points' read back. `comment` (may be empty) becomes a
// first line starting with "# ".
std::string points_text(const std::vector<RationalVector>& points, const std::string& comment);

// The points rounded to double, as a float64 .npy file (numpy.load reads it).
// Not exact: the caller says so.
void write_points_npy(const std::string& path, const std::vector<RationalVector>& points);

}  // namespace pleat::cli
