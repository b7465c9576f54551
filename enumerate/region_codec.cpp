#include "enumerate/region_codec.hpp"

#include <limits>
#include <stdexcept>
#include <variant>

namespace pleat {
namespace {

[[noreturn]] void corrupt() { throw std::runtime_error("truncated or corrupt message between processes"); }

// |z| as bytes, least significant first (mpz_export), after its byte count.
void put_integer_magnitude(ByteWriter& out, mpz_srcptr z) {
  const std::size_t count = mpz_sgn(z) == 0 ? 0 : (mpz_sizeinbase(z, 2) + 7) / 8;
  out.put_unsigned(count);
  std::string& bytes = out.bytes();
  const std::size_t at = bytes.size();
  bytes.resize(at + count);
  std::size_t written = 0;
  if (count) mpz_export(bytes.data() + at, &written, -1, 1, 0, 0, z);
  if (written != count) throw std::logic_error("put_integer_magnitude: size mismatch");
}

void get_integer_magnitude(ByteReader& in, mpz_ptr z) {
  const std::string_view bytes = in.get_bytes();
  if (bytes.empty()) {
    mpz_set_ui(z, 0);
    return;
  }
  mpz_import(z, bytes.size(), -1, 1, 0, 0, bytes.data());
}

std::vector<std::size_t> get_sizes(ByteReader& in) {
  std::vector<std::size_t> values(in.get_size());
  for (auto& value : values) value = static_cast<std::size_t>(in.get_unsigned());
  return values;
}

void put_sizes(ByteWriter& out, const std::vector<std::size_t>& values) {
  out.put_unsigned(values.size());
  for (std::size_t value : values) out.put_unsigned(value);
}

void put_optional_index(ByteWriter& out, const std::optional<std::size_t>& value) {
  out.put_unsigned(value ? *value + 1 : 0);
}

std::optional<std::size_t> get_optional_index(ByteReader& in) {
  const std::uint64_t value = in.get_unsigned();
  if (value == 0) return std::nullopt;
  return static_cast<std::size_t>(value - 1);
}

void put_constraint(ByteWriter& out, const lp::Constraint& constraint) {
  out.put_vector(constraint.normal);
  out.put_rational(constraint.offset);
}

lp::Constraint get_constraint(ByteReader& in) {
  lp::Constraint constraint;
  constraint.normal = in.get_vector();
  constraint.offset = in.get_rational();
  return constraint;
}

void put_facet(ByteWriter& out, const RegionFacet& facet) {
  put_sizes(out, facet.neurons);
  put_optional_index(out, facet.domain_side);
  out.put_vector(facet.normal);
  out.put_rational(facet.offset);
  out.put_bool(facet.neighbor.has_value());
  if (facet.neighbor) out.put_pattern(*facet.neighbor);
  out.put_unsigned(facet.other_neighbors.size());
  for (const auto& other : facet.other_neighbors) out.put_pattern(other);
  out.put_vector(facet.relative_interior.point);
}

RegionFacet get_facet(ByteReader& in) {
  RegionFacet facet;
  facet.neurons = get_sizes(in);
  facet.domain_side = get_optional_index(in);
  facet.normal = in.get_vector();
  facet.offset = in.get_rational();
  if (in.get_bool()) facet.neighbor = in.get_pattern();
  facet.other_neighbors.resize(in.get_size());
  for (auto& other : facet.other_neighbors) other = in.get_pattern();
  facet.relative_interior.point = in.get_vector();
  return facet;
}

void put_affine(ByteWriter& out, const AffineMap& map) {
  out.put_unsigned(map.linear.rows());
  out.put_unsigned(map.linear.cols());
  for (std::size_t r = 0; r < map.linear.rows(); ++r)
    for (std::size_t c = 0; c < map.linear.cols(); ++c) out.put_rational(map.linear(r, c));
  out.put_vector(map.offset);
}

AffineMap get_affine(ByteReader& in) {
  const std::size_t rows = in.get_size();
  const std::size_t cols = in.get_unsigned();
  if (cols && rows > std::numeric_limits<std::size_t>::max() / cols) corrupt();
  AffineMap map{RationalMatrix(rows, cols), {}};
  for (std::size_t r = 0; r < rows; ++r)
    for (std::size_t c = 0; c < cols; ++c) map.linear(r, c) = in.get_rational();
  map.offset = in.get_vector();
  return map;
}

void put_certificates(ByteWriter& out, const RegionCertificates& certificates) {
  out.put_unsigned(certificates.cell.dim);
  out.put_unsigned(certificates.cell.constraints.size());
  for (const auto& constraint : certificates.cell.constraints) put_constraint(out, constraint);
  put_sizes(out, certificates.constraint_neuron);
  out.put_unsigned(certificates.classification.groups.size());
  for (const lp::FacetGroup& group : certificates.classification.groups) {
    put_sizes(out, group.constraints);
    out.put_unsigned(group.verdict.index());
    if (const auto* point = std::get_if<lp::FacetPoint>(&group.verdict)) {
      out.put_vector(point->point);
    } else {
      const auto& certificate = std::get<lp::NonFacetCertificate>(group.verdict);
      out.put_rational(certificate.equality_multiplier);
      out.put_vector(certificate.multipliers);
    }
  }
  out.put_bool(certificates.boundedness.has_value());
  if (certificates.boundedness) {
    out.put_unsigned(certificates.boundedness->index());
    if (const auto* proof = std::get_if<lp::BoundednessCertificate>(&*certificates.boundedness))
      out.put_vector(proof->multipliers);
    else
      out.put_vector(std::get<lp::RecessionDirection>(*certificates.boundedness).direction);
  }
}

RegionCertificates get_certificates(ByteReader& in) {
  RegionCertificates certificates;
  certificates.cell.dim = in.get_unsigned();
  certificates.cell.constraints.resize(in.get_size());
  for (auto& constraint : certificates.cell.constraints) constraint = get_constraint(in);
  certificates.constraint_neuron = get_sizes(in);
  certificates.classification.groups.resize(in.get_size());
  for (lp::FacetGroup& group : certificates.classification.groups) {
    group.constraints = get_sizes(in);
    switch (in.get_unsigned()) {
      case 0:
        group.verdict = lp::FacetPoint{in.get_vector()};
        break;
      case 1: {
        lp::NonFacetCertificate certificate;
        certificate.equality_multiplier = in.get_rational();
        certificate.multipliers = in.get_vector();
        group.verdict = std::move(certificate);
        break;
      }
      default:
        corrupt();
    }
  }
  if (in.get_bool()) {
    switch (in.get_unsigned()) {
      case 0:
        certificates.boundedness = lp::BoundednessCertificate{in.get_vector()};
        break;
      case 1:
        certificates.boundedness = lp::RecessionDirection{in.get_vector()};
        break;
      default:
        corrupt();
    }
  }
  return certificates;
}

}  // namespace

void ByteWriter::put_unsigned(std::uint64_t value) {
  while (value >= 0x80) {
    bytes_.push_back(static_cast<char>((value & 0x7f) | 0x80));
    value >>= 7;
  }
  bytes_.push_back(static_cast<char>(value));
}

void ByteWriter::put_bytes(std::string_view bytes) {
  put_unsigned(bytes.size());
  bytes_.append(bytes);
}

// Sign, then |numerator| and denominator as bytes.
void ByteWriter::put_rational(const Rational& value) {
  put_unsigned(mpq_sgn(value.get_mpq_t()) < 0 ? 1 : 0);
  put_integer_magnitude(*this, value.get_num_mpz_t());
  put_integer_magnitude(*this, value.get_den_mpz_t());
}

void ByteWriter::put_vector(const RationalVector& values) {
  put_unsigned(values.size());
  for (const Rational& value : values) put_rational(value);
}

void ByteWriter::put_pattern(const ActivationPattern& pattern) {
  put_unsigned(pattern.states.size());
  unsigned char packed = 0;
  for (std::size_t i = 0; i < pattern.states.size(); ++i) {
    packed |= static_cast<unsigned char>(static_cast<unsigned>(pattern.states[i]) << (2 * (i % 4)));
    if (i % 4 == 3) {
      bytes_.push_back(static_cast<char>(packed));
      packed = 0;
    }
  }
  if (pattern.states.size() % 4) bytes_.push_back(static_cast<char>(packed));
}

std::string_view ByteReader::take(std::size_t count) {
  if (count > bytes_.size() - position_) corrupt();
  const std::string_view piece = bytes_.substr(position_, count);
  position_ += count;
  return piece;
}

std::uint64_t ByteReader::get_unsigned() {
  std::uint64_t value = 0;
  for (unsigned shift = 0; shift < 64; shift += 7) {
    const auto byte = static_cast<unsigned char>(take(1)[0]);
    value |= static_cast<std::uint64_t>(byte & 0x7f) << shift;
    if (!(byte & 0x80)) return value;
  }
  corrupt();
}

std::size_t ByteReader::get_size() {
  const std::uint64_t value = get_unsigned();
  // Every item takes at least one byte.
  if (value > bytes_.size() - position_) corrupt();
  return static_cast<std::size_t>(value);
}

std::string_view ByteReader::get_bytes() { return take(get_size()); }

Rational ByteReader::get_rational() {
  const bool is_negative = get_unsigned() != 0;
  Rational value;
  get_integer_magnitude(*this, value.get_num_mpz_t());
  get_integer_magnitude(*this, value.get_den_mpz_t());
  // put_rational wrote a canonical value (no gcd needed); only a zero
  // denominator could break mpq's invariants.
  if (mpz_sgn(value.get_den_mpz_t()) == 0) corrupt();
  if (is_negative) value = -value;
  return value;
}

RationalVector ByteReader::get_vector() {
  RationalVector values(get_size());
  for (Rational& value : values) value = get_rational();
  return values;
}

ActivationPattern ByteReader::get_pattern() {
  const std::uint64_t count = get_unsigned();
  if (count / 4 > bytes_.size() - position_) corrupt();
  const std::string_view packed = take((count + 3) / 4);
  ActivationPattern pattern;
  pattern.states.resize(count);
  for (std::size_t i = 0; i < count; ++i)
    pattern.states[i] = static_cast<NeuronState>((static_cast<unsigned char>(packed[i / 4]) >> (2 * (i % 4))) & 3);
  return pattern;
}

void put_region(ByteWriter& out, const Region& region) {
  out.put_unsigned(region.id);
  out.put_pattern(region.pattern);
  out.put_vector(region.interior.point);
  out.put_bool(region.bounded);
  out.put_bool(region.touches_domain_boundary);
  out.put_unsigned(region.facets.size());
  for (const RegionFacet& facet : region.facets) put_facet(out, facet);
  put_affine(out, region.affine);
  put_sizes(out, region.nonsmooth_neurons);
  out.put_bool(region.certificates.has_value());
  if (region.certificates) put_certificates(out, *region.certificates);
}

Region get_region(ByteReader& in) {
  Region region;
  region.id = in.get_unsigned();
  region.pattern = in.get_pattern();
  region.interior.point = in.get_vector();
  region.bounded = in.get_bool();
  region.touches_domain_boundary = in.get_bool();
  region.facets.resize(in.get_size());
  for (RegionFacet& facet : region.facets) facet = get_facet(in);
  region.affine = get_affine(in);
  region.nonsmooth_neurons = get_sizes(in);
  if (in.get_bool()) region.certificates = get_certificates(in);
  return region;
}

}  // namespace pleat
