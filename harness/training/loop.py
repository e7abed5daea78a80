"""The one training loop of every run: Adam on a feed's steps against an objective's loss,
validation every epoch, and the one early-stopping rule (harness.training.stopping)."""

from __future__ import annotations

import time
from collections.abc import Callable
from typing import Any

import torch
from torch import nn

from harness.results import RunResult
from harness.schema.training import Training
from harness.training.compiled import Forward, compile_record, compile_share
from harness.training.feeding import Feed, Step
from harness.training.objectives import Loss, Objective
from harness.training.resources import ActivationMeter, step_peak_mb
from harness.training.stopping import BestWeights


def fit(
    model: nn.Module,
    feed: Feed,
    objective: Objective,
    training: Training,
    on_epoch: Callable[[int, float], None] | None = None,
    no_compile_reason: str | None = None,
) -> RunResult:
    """Train until `epochs` or `patience` epochs without validation gain; restore best weights.

    `on_epoch(epoch, validation_score)` may raise to stop the run early (used by pruning).
    Peak memory is the tensor memory of a training step: parameters, gradients, Adam state,
    the step's inputs (feed.input_bytes) and targets, and the activations autograd keeps for
    backward (measured, not sampled, on the first step, which is always eager).

    With `training.compile` true, epochs from the second on run the compiled model (see
    harness.training.compiled) when the feed's steps keep one shape; `compile_seconds` is what
    the second epoch took beyond a typical epoch, and is left out of `seconds_per_epoch`.
    `no_compile_reason`: why the run's task never compiles, recorded when compiling was asked.
    """
    optimizer = torch.optim.Adam(
        model.parameters(), lr=training.learning_rate, weight_decay=training.weight_decay
    )
    refused = no_compile_reason if training.compile is True else None
    forward = Forward(model, training.compile is True and feed.compiles and refused is None)
    best = BestWeights(model, training.patience, on_epoch)

    def descend(network: nn.Module, loss_of: Loss, step: Step) -> None:
        optimizer.zero_grad()
        loss_of(network, step).backward()
        optimizer.step()

    epoch_seconds: list[float] = []
    meter = ActivationMeter()
    inputs = 0
    started = time.perf_counter()
    epoch = 0
    for epoch in range(1, training.epochs + 1):
        epoch_started = time.perf_counter()
        loss_of = objective.epoch_loss()
        model.train()
        for number, step in enumerate(feed.steps()):
            if epoch == 1 and number == 0:  # eager, with the activations of the step measured
                optimizer.zero_grad()
                with torch.autograd.graph.saved_tensors_hooks(meter.pack, meter.unpack):
                    loss = loss_of(model, step)
                inputs = feed.input_bytes(step)
                loss.backward()
                optimizer.step()
            else:
                forward.guarded(lambda network, s=step, f=loss_of: descend(network, f, s))
        model.eval()
        validation = (
            objective.validate(model) if epoch == 1 else forward.guarded(objective.validate)
        )
        epoch_seconds.append(time.perf_counter() - epoch_started)
        if best.should_stop(epoch, validation):
            break
    train_seconds = time.perf_counter() - started
    compile_seconds = compile_share(epoch_seconds) if forward.wanted else 0.0
    best.restore()
    scores = objective.scores(forward)
    compiled = forward.mode == "compiled"
    extras: dict[str, Any] = {
        "compile": compile_record(compiled, compile_seconds, forward.warning or refused),
        **feed.extras(),
        **scores.extras,
    }
    return RunResult(
        val_metric=scores.validation,
        test_metric=scores.test[scores.metric],
        test_scores=scores.test,
        epochs=epoch,
        best_epoch=best.best_epoch,
        seconds=time.perf_counter() - started,
        seconds_per_epoch=(train_seconds - compile_seconds) / epoch,
        params=sum(p.numel() for p in model.parameters()),
        peak_mb=step_peak_mb(model, inputs + objective.target_bytes(), meter.bytes),
        curve=best.curve,
        extras=extras,
        compiled=compiled,
        predictions=scores.predictions,
    )
