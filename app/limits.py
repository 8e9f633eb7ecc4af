"""How much the dashboard accepts: one upload, and one request (an upload arrives base64-encoded in JSON)."""

MAX_UPLOAD_BYTES = 20_000_000
# The largest upload reaches the server base64-encoded (4/3 of its size) inside a JSON callback body,
# beside the page's other state: 30 MB holds that with room.
MAX_REQUEST_BYTES = 30_000_000
