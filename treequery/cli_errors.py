"""How every command group turns library errors into messages and exit codes."""
from __future__ import annotations

import sqlite3
import sys

import click

from .errors import PatternError, SearchTimeout, TreequeryError

EXIT_FAILURE = 1
EXIT_BAD_INPUT = 2      # a pattern (or a rules file) that cannot be read
EXIT_INTERRUPTED = 130  # 128 + SIGINT, what shells report for Ctrl-C


class TreequeryGroup(click.Group):
    """Turns library errors into messages and exit codes, in one place.

    `bad_input_errors` are the errors that mean "what you wrote cannot be read"
    (exit 2); a group for another kind of input adds its own error types there.
    """

    bad_input_errors: tuple[type[Exception], ...] = (PatternError,)

    def invoke(self, ctx: click.Context):
        try:
            return super().invoke(ctx)
        except self.bad_input_errors as error:
            shown = error.render() if isinstance(error, PatternError) else f"error: {error}"
            click.echo(shown, err=True)
            ctx.exit(EXIT_BAD_INPUT)
        except SearchTimeout as error:
            click.echo(f"stopped: {error}", err=True)
            ctx.exit(EXIT_FAILURE)
        except (TreequeryError, FileNotFoundError) as error:
            click.echo(f"error: {error}", err=True)
            ctx.exit(EXIT_FAILURE)
        except KeyboardInterrupt:
            click.echo("interrupted", err=True)
            ctx.exit(EXIT_INTERRUPTED)
        except sqlite3.OperationalError as error:
            if str(error) != "interrupted":  # Ctrl-C noticed inside a search step
                raise
            click.echo("interrupted", err=True)
            ctx.exit(EXIT_INTERRUPTED)
        except BrokenPipeError:  # `treequery find ... | head`
            sys.stderr.close()
            ctx.exit(0)
