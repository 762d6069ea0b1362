"""Readers and writers of notes, registered by versioned name; importing this package registers the built-ins."""
from deid.io.open import load_builtins

load_builtins()
