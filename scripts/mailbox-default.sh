# Sourced by start.sh: decides BANDLEDGER_MAILBOX from HOST and SMTP_URL when it was not set.
# The local mailbox page holds every sign-in code. npm start serves the demo on this machine, so it is on there;
# reachable from elsewhere (a HOST other than loopback) or with a real mail server it stays off unless asked for.
mailbox_loopback_host() { case "$1" in 127.*|localhost|::1|"[::1]") return 0 ;; *) return 1 ;; esac; }
if [ -z "${BANDLEDGER_MAILBOX:-}" ]; then
  if [ -n "${SMTP_URL:-}" ] || ! mailbox_loopback_host "$HOST"; then export BANDLEDGER_MAILBOX=off; else export BANDLEDGER_MAILBOX=on; fi
elif [ "$BANDLEDGER_MAILBOX" = on ] && ! mailbox_loopback_host "$HOST"; then
  printf 'bandledger: warning: BANDLEDGER_MAILBOX=on while the app listens on %s; the mailbox page still answers only a browser on this machine, but switch it off where others can reach this host\n' "$HOST" >&2
fi
