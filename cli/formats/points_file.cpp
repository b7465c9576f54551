// Points files (see points_file.hpp). The .npy format is read by xtensor's
// reader (Debian's libxtensor-dev), from a copy of the file in memory so that
// a short or over-long file is caught here: xtensor does not check either.
#include "cli/formats/points_file.hpp"

#include "cli/common.hpp"
#include "cli/formats/line_input.hpp"

#include <xtensor/xarray.hpp>
#include <xtensor/xnpy.hpp>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <regex>
#include <sstream>
#include <string_view>

namespace pleat::cli {
namespace {

constexpr std::size_t max_points_file_bytes = std::size_t{1} << 30;  // 1 GiB: far beyond any batch
// A point of many long exact coordinates stays far below this.
constexpr std::size_t max_point_line_bytes = std::size_t{16} << 20;

bool ends_with(const std::string& text, std::string_view suffix) {
  return text.size() >= suffix.size() && text.compare(text.size() - suffix.size(), suffix.size(), suffix) == 0;
}

std::string trimmed(std::string_view text) {
  const std::size_t first = text.find_first_not_of(" \t\r");
  if (first == std::string_view::npos) return "";
  const std::size_t last = text.find_last_not_of(" \t\r");
  return std::string(text.substr(first, last - first + 1));
}

// Fields of one line: comma-separated when it has a comma (spaces around
// fields allowed), otherwise separated by runs of spaces or tabs.
std::vector<std::string> split_fields(const std::string& line) {
  std::vector<std::string> fields;
  if (line.find(',') != std::string::npos) {
    std::size_t start = 0;
    for (;;) {
      const std::size_t comma = line.find(',', start);
      fields.push_back(trimmed(std::string_view(line).substr(start, comma == std::string::npos ? comma : comma - start)));
      if (comma == std::string::npos) return fields;
      start = comma + 1;
    }
  }
  std::istringstream words(line);
  for (std::string word; words >> word;) fields.push_back(word);
  return fields;
}

// How numpy.savetxt, pandas and Python write a value that is no finite
// number: 'nan', 'inf', '-inf', 'NaN', 'Infinity', ... (any case, signed).
bool is_non_finite_word(const std::string& field) {
  std::string word = field.substr(!field.empty() && (field[0] == '+' || field[0] == '-') ? 1 : 0);
  std::transform(word.begin(), word.end(), word.begin(), [](unsigned char c) { return std::tolower(c); });
  return word == "nan" || word == "inf" || word == "infinity";
}

// A field that starts as a number does (a digit, or a sign or point and a
// digit), or a non-finite value: a fault in it makes a bad value, never a
// column name. Every number parse_rational reads is one ([-]? then a digit
// or '.' and a digit). A first line 'nan,nan' or 'inf' (numpy.savetxt's
// spellings) was taken for a header and skipped, its point lost unsaid.
bool looks_numeric(const std::string& field) {
  const auto digit = [](char c) { return c >= '0' && c <= '9'; };
  if (field.empty()) return false;
  if (digit(field[0]) || is_non_finite_word(field)) return true;
  std::size_t i = (field[0] == '+' || field[0] == '-') ? 1 : 0;
  if (i < field.size() && field[i] == '.') ++i;
  return i > 0 && i < field.size() && digit(field[i]);
}

// after_index: a first field (pandas' row index) was dropped before them.
RationalVector parse_fields(const std::vector<std::string>& fields, std::size_t dimension, const std::string& place,
                            bool after_index) {
  // An empty field (two commas with nothing between, or a comma at either
  // end) is named before the count: '1,,2' and '1,2,' were "3 values".
  for (std::size_t i = 0; i < fields.size(); ++i)
    if (fields[i].empty())
      throw input_error(place + ": value " + std::to_string(i + 1) + " of " + std::to_string(fields.size()) +
                        " is empty (" +
                        (i + 1 == fields.size() ? "the line ends with a comma"
                         : i == 0 && !after_index ? "the line starts with a comma"
                                                : "nothing between two commas") +
                        "); the network takes " + std::to_string(dimension) +
                        (dimension == 1 ? " input" : " inputs"));
  if (fields.size() != dimension)
    throw input_error(place + ": the network takes " + std::to_string(dimension) +
                      (dimension == 1 ? " input" : " inputs") + ", but the line has " + std::to_string(fields.size()) +
                      (fields.size() == 1 ? " value" : " values"));
  RationalVector point;
  for (std::size_t i = 0; i < fields.size(); ++i) {
    try {
      point.push_back(parse_rational(fields[i]));
    } catch (const input_error& fault) {
      throw input_error(place + ": value " + std::to_string(i + 1) + " ('" + fields[i] + "'): " +
                        (is_non_finite_word(fields[i]) ? std::string("not a finite number") : fault.what()));
    }
  }
  return point;
}

std::string read_whole_file(const std::string& path) {
  std::error_code error;
  if (std::filesystem::is_directory(path, error)) throw input_error(path + ": is a directory, not a points file");
  std::ifstream file(path, std::ios::binary);
  if (!file) throw input_error(path + ": cannot open");
  file.seekg(0, std::ios::end);
  const std::streamoff size = file.tellg();
  if (size < 0 || static_cast<std::uintmax_t>(size) > max_points_file_bytes)
    throw input_error(path + ": larger than 1 GiB; not read");
  file.seekg(0);
  return std::string(std::istreambuf_iterator<char>(file), std::istreambuf_iterator<char>());
}

// Read one line at a time: a text file of points may be large, and one that
// is not text (NUL bytes, one endless line) fails at once.
PointsFile read_text_points(const std::string& path, std::size_t dimension) {
  LineInput file(path, "points file", max_point_line_bytes);
  PointsFile result;
  bool is_first_line = true, drops_index_column = false;
  std::string line;
  while (file.next(line)) {
    const std::string place = file.path() + ":" + std::to_string(file.line_number());
    // A UTF-8 byte-order mark, as spreadsheets write at the start of a CSV
    // file, is no part of the first value (it was read as one, invisibly).
    if (file.line_number() == 1 && line.starts_with("\xEF\xBB\xBF")) line.erase(0, 3);
    const std::string content = trimmed(line);
    if (content.empty() || content.front() == '#') continue;
    // Values separated by ';' (a spreadsheet's CSV in some locales) were one
    // field that is no number: '1;2' read as a header of one column name.
    if (content.find(';') != std::string::npos) {
      const std::string shown = content.size() > 40 ? content.substr(0, 40) + "..." : content;
      throw input_error(place + ": '" + shown +
                        "' separates values with ';': separate them with commas, or with spaces or tabs");
    }
    std::vector<std::string> fields = split_fields(content);
    if (is_first_line) {
      is_first_line = false;
      // A header names columns: no field is a number, except under pandas's
      // unnamed index column (its column names may be 0, 1, ...). A first
      // line that mixes numbers with other text is a point with a fault,
      // not a header to skip (the old rule dropped '1,2a' silently).
      const bool is_pandas_index = fields.front().empty() && fields.size() == dimension + 1;
      // A field that starts as a number does ('0.5x') is a faulty value too,
      // not a column name: with one input it was skipped as a header.
      const bool has_number = std::any_of(fields.begin(), fields.end(), looks_numeric);
      if (is_pandas_index || !has_number) {
        // pandas writes its row index as a first column with an empty name.
        drops_index_column = is_pandas_index;
        if (fields.size() != dimension + (drops_index_column ? 1 : 0))
          throw input_error(place + ": a header of " + std::to_string(fields.size()) + " column names, but the network takes " +
                            std::to_string(dimension) + (dimension == 1 ? " input" : " inputs"));
        continue;
      }
    }
    if (drops_index_column && !fields.empty()) fields.erase(fields.begin());
    result.points.push_back(parse_fields(fields, dimension, place, drops_index_column));
    result.places.push_back(place + " (point " + std::to_string(result.points.size()) + ")");
  }
  return result;
}

// Copies a float64 or float32 array of shape (n, dimension), or (n) when
// dimension is 1, into exact points.
template <class Value>
PointsFile npy_points(const xt::xarray<Value>& array, std::size_t dimension, const std::string& path) {
  const auto& shape = array.shape();
  const bool is_column = shape.size() == 1 && dimension == 1;
  if (!is_column && !(shape.size() == 2 && shape[1] == dimension)) {
    std::string text = "(";
    for (std::size_t i = 0; i < shape.size(); ++i) text += (i ? ", " : "") + std::to_string(shape[i]);
    throw input_error(path + ": an array of shape " + text + ") where (points, " + std::to_string(dimension) +
                      ") was expected");
  }
  PointsFile result;
  for (std::size_t row = 0; row < shape[0]; ++row) {
    RationalVector point;
    for (std::size_t column = 0; column < dimension; ++column) {
      const double value = static_cast<double>(is_column ? array(row) : array(row, column));
      if (!std::isfinite(value))
        throw input_error(path + "[" + std::to_string(row) + (is_column ? "" : ", " + std::to_string(column)) +
                          "] (point " + std::to_string(row + 1) + ", value " + std::to_string(column + 1) +
                          "): not a finite number");
      point.push_back(rational_from_double(value));  // exact: a double is a dyadic rational
    }
    result.points.push_back(std::move(point));
    result.places.push_back(path + "[" + std::to_string(row) + "] (point " + std::to_string(row + 1) + ")");
  }
  return result;
}

// Loads with element type Value; true when the file holds that type.
template <class Value>
bool try_load_npy(const std::string& bytes, const std::string& path, std::size_t dimension, PointsFile& result) {
  std::istringstream stream(bytes);
  xt::xarray<Value> array;
  try {
    array = xt::load_npy<Value>(stream);
  } catch (const std::runtime_error& fault) {
    if (std::string(fault.what()).find("formats not matching") != std::string::npos) return false;
    throw input_error(path + ": not a .npy file numpy can write (" + fault.what() + ")");
  }
  // The data must end exactly at the end of the file (xtensor checks neither
  // a short read nor extra bytes), and the shape's product must not have
  // wrapped around (xtensor multiplies without an overflow check).
  std::size_t elements = 1;
  for (std::size_t extent : array.shape())
    if (__builtin_mul_overflow(elements, extent, &elements)) elements = SIZE_MAX;
  if (!stream || stream.tellg() != static_cast<std::streamoff>(bytes.size()) || elements > bytes.size() / sizeof(Value))
    throw input_error(path + ": the array data does not match the file's length (truncated or extra bytes)");
  result = npy_points(array, dimension, path);
  return true;
}

// The header dictionary as numpy writes it, checked before xtensor's parser sees
// it: that parser reads past the ends of malformed headers (a key without its
// colon, an empty value), which the fuzz run found.
void require_numpy_header(const std::string& bytes, const std::string& path) {
  const unsigned version = static_cast<unsigned char>(bytes[6]);
  if (version < 1 || version > 3) throw input_error(path + ": .npy format version " + std::to_string(version) + " (1 to 3 are read)");
  const std::size_t field = version == 1 ? 2 : 4;
  if (bytes.size() < 8 + field) throw input_error(path + ": the .npy header is cut short");
  std::size_t length = 0;
  for (std::size_t k = 0; k < field; ++k) length |= std::size_t{static_cast<unsigned char>(bytes[8 + k])} << (8 * k);
  const std::size_t start = 8 + field;
  if (length > bytes.size() - start) throw input_error(path + ": the .npy header is longer than the file");
  std::string header = bytes.substr(start, length);
  if (header.empty() || header.back() != '\n') throw input_error(path + ": the .npy header does not end in a newline");
  header.pop_back();
  std::erase(header, ' ');
  static const std::regex numpy_dictionary(
      R"(\{'descr':'[<>|=][a-z][0-9]+','fortran_order':(True|False),'shape':\(([0-9]+,)*[0-9]*\),?\})");
  if (!std::regex_match(header, numpy_dictionary))
    throw input_error(path + ": the .npy header is not a dictionary of 'descr', 'fortran_order' and 'shape' as numpy writes it");
}

PointsFile read_npy_points(const std::string& path, std::size_t dimension) {
  const std::string bytes = read_whole_file(path);
  if (bytes.size() < 10 || bytes.compare(0, 6, "\x93NUMPY") != 0)
    throw input_error(path + ": not a .npy file (no \\x93NUMPY magic at the start)");
  require_numpy_header(bytes, path);
  PointsFile result;
  try {
    if (try_load_npy<double>(bytes, path, dimension, result) || try_load_npy<float>(bytes, path, dimension, result))
      return result;
  } catch (const std::bad_alloc&) {
    throw input_error(path + ": the header's shape is far larger than the file");
  }
  throw input_error(path + ": expected a little-endian float64 or float32 array ('<f8' or '<f4')");
}

}  // namespace

PointsFile read_points_file(const std::string& path, std::size_t dimension) {
  PointsFile result = ends_with(path, ".npy") ? read_npy_points(path, dimension) : read_text_points(path, dimension);
  if (result.points.empty()) throw input_error(path + ": no points");
  return result;
}

std::string points_text(const std::vector<RationalVector>& points, const std::string& comment) {
  std::string text;
  if (!comment.empty()) text += "# " + comment + "\n";
  for (const auto& point : points) {
    for (std::size_t i = 0; i < point.size(); ++i) {
      if (i) text += ',';
      text += format_rational(point[i]);
    }
    text += "\n";
  }
  return text;
}

void write_points_npy(const std::string& path, const std::vector<RationalVector>& points) {
  const std::size_t dimension = points.empty() ? 0 : points.front().size();
  xt::xarray<double> array = xt::zeros<double>({points.size(), dimension});
  for (std::size_t row = 0; row < points.size(); ++row)
    for (std::size_t column = 0; column < dimension; ++column) array(row, column) = to_double(points[row][column]);
  write_output(path, xt::dump_npy(array));
}

}  // namespace pleat::cli
