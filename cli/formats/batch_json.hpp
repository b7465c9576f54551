// The pleat-batch/1 document (`pleat certify --points --json`,
// docs/formats.md): the batch functional dimension at given points (or its
// proved bounds when a stop cut it short) beside the network's certify
// result. A writer only; the caller adds `claim` and `seconds`.
#pragma once

#include "cli/common.hpp"
#include "core/network.hpp"
#include "enumerate/batch_dimension.hpp"
#include "enumerate/domain.hpp"
#include "enumerate/functional_dimension.hpp"

namespace pleat::cli {

Json batch_to_json(const Network& network, const Domain& domain, const BatchDimension& batch,
                   const FunctionalDimensionResult& result);

}  // namespace pleat::cli
