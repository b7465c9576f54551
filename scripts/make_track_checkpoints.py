#!/usr/bin/python3
"""Writes the training-run checkpoints in data/track/ (for `pleat track`).

A small ReLU network (2 -> 6 -> 5 -> 1) of the orchard scenario (data/README.md)
is trained with torch in float32 to imitate an invented fan-drive rule on
(-2, 2)^2, and saved at a few epochs as pleat-network/1 JSON. Each weight is
written as the shortest decimal that reads back as the same float32 (numpy's
float32 repr); pleat reads that decimal exactly, so the file *is* the network
pleat certifies. Nothing is downloaded; the run takes a few seconds on a CPU.

Usage: /usr/bin/python3 scripts/make_track_checkpoints.py [OUT_DIR]   (default data/track)
Rerunning writes the same files (fixed seeds, one thread).
"""
import json
import os
import sys

import numpy
import torch

EPOCHS_SAVED = (0, 2, 5, 10, 20, 40)
WIDTHS = (2, 6, 5, 1)


def fan_drive(points):
    """The invented rule: run harder the colder (x0) and the stiller (x1) the night."""
    cold, wind = points[:, 0], points[:, 1]
    return torch.relu(cold) * torch.relu(1.0 - 0.5 * torch.abs(wind)) - 0.25 * torch.relu(-cold)


def decimal(value):
    return str(numpy.float32(value))  # shortest decimal that reads back as this float32


def network_document(model, epoch, loss):
    layers = []
    linears = [module for module in model if isinstance(module, torch.nn.Linear)]
    for index, linear in enumerate(linears):
        weights = linear.weight.detach().numpy()
        bias = linear.bias.detach().numpy()
        layers.append({
            "weights": [[decimal(w) for w in row] for row in weights],
            "bias": [decimal(b) for b in bias],
            "activation": "linear" if index == len(linears) - 1 else "relu",
        })
    return {
        "format": "pleat-network/1",
        "name": f"frost fan, training run, epoch {epoch}",
        "input_dim": WIDTHS[0],
        "layers": layers,
        "meta": {
            "epoch": epoch,
            "train_loss": float(f"{loss:.6g}"),
            "made_by": "scripts/make_track_checkpoints.py (torch, float32, seed 0, Adam lr 0.05, "
                       "batch 64 of 512 points uniform on (-2,2)^2)",
        },
    }


def main():
    out_dir = sys.argv[1] if len(sys.argv) > 1 else os.path.join(os.path.dirname(__file__), "..", "data", "track")
    os.makedirs(out_dir, exist_ok=True)
    torch.manual_seed(0)
    torch.set_num_threads(1)
    layers = []
    for fan_in, fan_out in zip(WIDTHS, WIDTHS[1:]):
        layers += [torch.nn.Linear(fan_in, fan_out), torch.nn.ReLU()]
    model = torch.nn.Sequential(*layers[:-1])
    points = torch.rand(512, 2) * 4.0 - 2.0
    targets = fan_drive(points).unsqueeze(1)
    optimiser = torch.optim.Adam(model.parameters(), lr=0.05)
    loss_value = float(torch.nn.functional.mse_loss(model(points), targets))
    for epoch in range(max(EPOCHS_SAVED) + 1):
        if epoch in EPOCHS_SAVED:
            path = os.path.join(out_dir, f"epoch{epoch:02d}.json")
            with open(path, "w") as handle:
                json.dump(network_document(model, epoch, loss_value), handle, indent=1)
                handle.write("\n")
            print(f"{path}: loss {loss_value:.5f}")
        for start in range(0, len(points), 64):
            optimiser.zero_grad()
            loss = torch.nn.functional.mse_loss(model(points[start:start + 64]), targets[start:start + 64])
            loss.backward()
            optimiser.step()
        loss_value = float(torch.nn.functional.mse_loss(model(points), targets))


if __name__ == "__main__":
    main()
