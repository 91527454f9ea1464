"""`treequery serve`: the local web page over one index, read-only (needs the `web` extra)."""
from __future__ import annotations

import ipaddress

import click

from .errors import TreequeryError

DEFAULT_PORT = 8765
DEFAULT_TIMEOUT = 10.0


def is_loopback(host: str) -> bool:
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


@click.command()
@click.option("--db", "db", type=click.Path(dir_okay=False), default=None,
              help="Index file (default: the bundled demo treebank, built on first use).")
@click.option("--port", type=click.IntRange(1, 65535), default=DEFAULT_PORT, show_default=True)
@click.option("--host", default="127.0.0.1", show_default=True,
              help="Address to listen on; anything but this machine needs --allow-remote.")
@click.option("--allow-remote", is_flag=True,
              help="Allow --host to be an address other machines can reach (no login, "
                   "no encryption: anyone who reaches it can search the index).")
@click.option("--timeout", type=click.FloatRange(min=0, min_open=True), default=DEFAULT_TIMEOUT,
              show_default=True, help="Stop each search after this many seconds.")
def serve(db, port, host, allow_remote, timeout) -> None:
    """Search an index from a web page in your browser (http://127.0.0.1:PORT/).

    The index is opened read-only; the server reads no other file. Ctrl-C stops it.
    """
    try:
        import uvicorn

        from .web.app import LOOPBACK_HOSTS, create_app
    except ImportError as error:
        raise click.ClickException(
            f"the web page needs packages that are not installed ({error.name}): "
            "pip install 'treequery[web]'") from None
    loopback = is_loopback(host)
    if not loopback and not allow_remote:
        raise click.UsageError(f"--host {host} can be reached from other machines; "
                               "add --allow-remote if that is what you want")
    if not loopback:
        click.echo(f"warning: serving on {host}: anyone who can reach this address can "
                   "search the index (no login, no encryption)", err=True)
    path = db if db is not None else demo_index()
    hosts = (*LOOPBACK_HOSTS, host) if loopback else ("*",)
    app = create_app(path, timeout=timeout, hosts=hosts)
    shown = f"[{host}]" if ":" in host else host
    click.echo(f"treequery: searching {path} at http://{shown}:{port}/ (Ctrl-C stops)",
               err=True)
    uvicorn.run(app, host=host, port=port, log_level="warning")


def demo_index() -> str:
    from .demo import demo_index_path

    try:
        return str(demo_index_path())
    except FileNotFoundError as error:
        raise TreequeryError(str(error)) from None
