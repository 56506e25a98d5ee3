"""The diagram language grammar (diagram.lark), shipped as package data."""
