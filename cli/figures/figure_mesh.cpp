#include "cli/figures/figure_mesh.hpp"

#include "cli/common.hpp"
#include "cli/figures/figure.hpp"
#include "core/stop.hpp"
#include "lp/oracle.hpp"
#include "lp/vertex_geometry.hpp"

#include <map>
#include <set>
#include <sstream>
#include <variant>

namespace pleat::cli {

RegionMesh region_mesh(const Network& network, const std::vector<Region>& regions, const View& view,
                       bool with_domain_sides) {
  std::map<RationalVector, std::size_t> vertex_index;
  std::vector<RationalVector> vertices;
  struct Face {
    std::vector<std::size_t> corners;
    std::size_t region;
  };
  std::vector<Face> faces;
  std::map<ActivationPattern, std::size_t> index_of;
  for (std::size_t i = 0; i < regions.size(); ++i) index_of.emplace(regions[i].pattern, i);
  std::vector<std::set<std::size_t>> adjacent(regions.size());
  std::size_t drawn_regions = 0;
  lp::Oracle oracle;
  for (std::size_t r = 0; r < regions.size(); ++r) {
    poll_stop();
    const Region& region = regions[r];
    for (const auto& facet : region.facets)
      if (facet.neighbor && index_of.count(*facet.neighbor)) {
        adjacent[r].insert(index_of[*facet.neighbor]);
        adjacent[index_of[*facet.neighbor]].insert(r);
      }
    lp::Polyhedron cell = closed_cell(region, with_domain_sides);
    for (std::size_t axis = 0; axis < 3; ++axis) {
      RationalVector e(3, Rational(0));
      e[axis] = 1;
      cell.constraints.push_back(lp::Constraint{e, -view.lower[axis]});
      e[axis] = -1;
      cell.constraints.push_back(lp::Constraint{e, view.upper[axis]});
    }
    // A saved walk (draw --from) holds regions beyond the view: only a cell with
    // interior inside the view is a polytope to draw (vertex_representation
    // needs a point strictly inside; cddlib gave an empty cell no point at all).
    const lp::CellVerdict in_view = oracle.decide_open_cell(cell);
    const auto* inside = std::get_if<lp::InteriorPoint>(&in_view);
    if (!inside) continue;
    const lp::VertexRepresentation rep = lp::vertex_representation(cell, inside->point);
    if (rep.points.size() < 4) continue;
    ++drawn_regions;
    for (const lp::PolytopeFace& polytope_face : lp::polytope_faces(cell, rep.points)) {
      Face face{{}, r};
      for (std::size_t corner : polytope_face.corners) {
        auto [it, inserted] = vertex_index.emplace(rep.points[corner], vertices.size());
        if (inserted) vertices.push_back(rep.points[corner]);
        face.corners.push_back(it->second);
      }
      faces.push_back(std::move(face));
    }
  }
  const std::vector<std::size_t> colour = smallest_last_colouring(adjacent);
  std::vector<std::string> palette = categorical_palette();
  std::ostringstream out;
  out << "OFF\n# regions of a ReLU network clipped to " << describe_view(view) << ", written by pleat draw\n";
  out << vertices.size() << " " << faces.size() << " 0\n";
  for (const auto& p : vertices)
    out << format_double(to_double(p[0])) << " " << format_double(to_double(p[1])) << " "
        << format_double(to_double(p[2])) << "\n";
  for (const auto& face : faces) {
    out << face.corners.size();
    for (std::size_t index : face.corners) out << " " << index;
    const std::string hex = colour[face.region] < palette.size() ? palette[colour[face.region]]
                                                                 : sequential_colour(0.5);
    for (int k = 0; k < 3; ++k)
      out << " " << format_double(std::stoi(hex.substr(1 + 2 * k, 2), nullptr, 16) / 255.0);
    out << "\n";
  }
  // The side table: which region each face (in file order) bounds.
  std::ostringstream table;
  table << "face,region,pattern\n";
  for (std::size_t f = 0; f < faces.size(); ++f)
    table << f << "," << regions[faces[f].region].id << "," << format_pattern(network, regions[faces[f].region].pattern)
          << "\n";
  return RegionMesh{out.str(), table.str(), vertices.size(), faces.size(), drawn_regions};
}

}  // namespace pleat::cli
