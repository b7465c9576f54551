// The pleat-bundle/1 document (`pleat certify --bundle`, docs/formats.md): a
// certified functional dimension with every piece of evidence a reader needs
// to re-check it with scripts/check_bundle.py. A writer only.
#pragma once

#include "cli/common.hpp"
#include "core/network.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/proof_bundle.hpp"

namespace pleat::cli {

// Precondition: result.certified and bundle gathered for its value.
Json bundle_to_json(const Network& network, const Domain& domain, const FunctionalDimensionResult& result,
                    const ProofBundle& bundle);

}  // namespace pleat::cli
