"""Screens that tell the app when they are up, so the keys typed while they opened go to them.

The app holds keys from a change of screen until the new screen is up and has its focus
(FieldcheckApp.on_event, FieldcheckApp.screen_up): a key typed straight after ctrl+n lands in
the new form, never in the list behind it, where a letter may be a command.
"""

from __future__ import annotations

from typing import Any


class ReleasesKeys:
    """Mixin for a Screen: the app may hold keys until this screen is resumed and refreshed."""

    releases_keys = True

    def on_screen_resume(self) -> None:
        screen: Any = self
        up = getattr(screen.app, "screen_up", None)
        if up is not None:
            up(screen)
