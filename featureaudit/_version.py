"""The version, in a module of its own so that any module can import it without importing the
package's public API (which would close an import cycle through ``api``)."""

__version__ = "0.3.0"
