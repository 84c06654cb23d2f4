// Placeholder replaced by the mail-sink implementation.
setInterval(() => undefined, 1 << 30);
