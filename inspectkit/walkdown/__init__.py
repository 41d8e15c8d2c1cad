"""The walkdown without a screen: a visit started, each entry saved the moment it is made.

The walkdown screen calls these functions and nothing else, so a command or a test does
exactly what the screen does. Each function saves at once in its own transaction: what
an inspector was told is saved survives a crash or a flat battery on the roof. Callers
import from the module that holds the name: `visit` (starting, continuing, discarding,
the visit's people and details), `instruments`, `readings`, `judging`, `grades`,
`photos`, `completion` and `continuing` (what a walkdown left, saved and not); `errors`
holds `WalkdownError`. The walking order itself is pure, in `inspectkit.engine.walking`.
"""
