#!/usr/bin/python3
"""From a training script to a certified functional dimension, in one page.

Runs as a plain script (CI runs it) and reads like a notebook: each block is
one cell. The toy problem is our own: a network learns the height of a
folded paper strip, h(x, y) = min(1 - |y|, |x - 0.3| + 0.2) on [-1, 1]^2, a
piecewise-linear target a small ReLU network can match. We train it in
float32 with PyTorch, hand it to pleat exactly as trained, certify its
functional dimension, and set that beside the usual float estimate: torch's
own Jacobian of the output with respect to the parameters at 2 * D' random
points (D' the certified value), ranked by torch.linalg.matrix_rank.

    PYTHONPATH=build/python /usr/bin/python3 examples/notebook_walkthrough.py
"""
import torch

import pleat

# --- Cell 1: the toy problem and a tiny MLP --------------------------------------
torch.manual_seed(0)
inputs = torch.rand(512, 2) * 2 - 1
heights = torch.minimum(1 - inputs[:, 1].abs(), (inputs[:, 0] - 0.3).abs() + 0.2).unsqueeze(1)
model = torch.nn.Sequential(torch.nn.Linear(2, 6), torch.nn.ReLU(), torch.nn.Linear(6, 5), torch.nn.ReLU(),
                            torch.nn.Linear(5, 1))

# --- Cell 2: train (float32, as usual) -------------------------------------------
optimizer = torch.optim.Adam(model.parameters(), lr=0.02)
for step in range(400):
    optimizer.zero_grad()
    loss = torch.nn.functional.mse_loss(model(inputs), heights)
    loss.backward()
    optimizer.step()
print(f"trained: mean squared error {loss.item():.4f} after {step + 1} steps")

# --- Cell 3: the same network in pleat, exactly ----------------------------------
net = pleat.Network.from_torch(model)  # every float32 weight is a dyadic rational, taken exactly
print(f"{net}: {net.parametric_dimension} parameters, scaling bound {net.scaling_bound}")

# --- Cell 4: certify on the training square ---------------------------------------
result = net.certify(domain=(-1, 1), full_walk=True)
print(f"certified functional dimension on (-1,1)^2: {result.functional_dimension} "
      f"(certified: {result.certified}, {result.regions_walked} regions)")
print(f"  lower bound: {result.evidence['lower_bound']}")
print(f"  upper bound: {result.evidence['upper_bound']}")
for group in result.extra_kernel_summary:
    print(f"  flat directions beyond rescaling: {group}")

# --- Cell 5: torch's own float estimate at 2 * D' points --------------------------
try:
    from torch.func import functional_call, jacrev
except ImportError:  # torch < 2.0: the same functions under their earlier names
    from functorch import jacrev
    from torch.nn.utils.stateless import functional_call

points = torch.rand(2 * result.functional_dimension, 2) * 2 - 1
parameters = {name: p.detach() for name, p in model.named_parameters()}
jacobian = jacrev(lambda p: functional_call(model, p, (points,)))(parameters)
stacked = torch.cat([block.reshape(points.shape[0], -1) for block in jacobian.values()], dim=1)
float_rank = int(torch.linalg.matrix_rank(stacked))
print(f"torch float32 Jacobian rank at {points.shape[0]} points: {float_rank} "
      f"({stacked.shape[0]} x {stacked.shape[1]}, torch.linalg.matrix_rank)")
print(f"certified value: {result.functional_dimension}; the float estimate is "
      + ("equal" if float_rank == result.functional_dimension else
         f"{'below' if float_rank < result.functional_dimension else 'above'} it by "
         f"{abs(float_rank - result.functional_dimension)}"))

# --- Cell 6: how many regions did those points reach? -----------------------------
patterns = {net.eval([float(v) for v in p]).pattern for p in points}
print(f"the {points.shape[0]} points fell in {len(patterns)} of the {result.regions_total} regions")

# --- Cell 7: rounding or the points? The exact rank at the very same points --------
at_points = net.certify(domain=(-1, 1), points=points.tolist(), claim=float_rank)
print(f"exact rank of the Jacobian at the same {points.shape[0]} points: "
      f"{at_points.batch.batch_functional_dimension} (torch's {float_rank}: {at_points.batch.claim.verdict})")
assert result.certified and result.functional_dimension <= net.scaling_bound
