// Walks a network's regions on R^n0 and certifies its functional dimension
// with the installed pleat library (find_package(pleat), pleat::pleat).
//   certify_example NETWORK.json
#include <pleat/core/network_io.hpp>
#include <pleat/enumerate/domain.hpp>
#include <pleat/enumerate/functional_dimension.hpp>
#include <pleat/enumerate/walker.hpp>

#include <exception>
#include <iostream>

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: certify_example NETWORK.json\n";
    return 2;
  }
  try {
    const pleat::Network network = pleat::read_network_file(argv[1]);
    const pleat::Domain domain = pleat::make_whole_space(network.input_dim);

    pleat::WalkOptions walk;
    const pleat::WalkSummary regions = pleat::walk_regions(network, domain, walk);
    std::cout << "regions " << regions.regions << (regions.certified ? " (certified)" : " (lower bound)") << "\n";

    const pleat::FunctionalDimensionResult result =
        pleat::certify_functional_dimension(network, domain, pleat::FunctionalDimensionOptions{});
    if (result.certified)
      std::cout << "functional dimension " << *result.functional_dimension << " (certified)\n";
    else
      std::cout << "functional dimension between " << result.lower_bound << " and " << result.upper_bound << "\n";
    return 0;
  } catch (const std::exception& error) {
    std::cerr << "certify_example: " << error.what() << "\n";
    return 1;
  }
}
