#!/bin/sh
# HAProxy's check of one Galera node (arguments: proxy address, proxy port, node address, node port): ready only
# while the node is a synced member of the primary component, so no connection lands on a joining or donor node.
state=$(mariadb --no-defaults -h "$3" -P "$4" -u tercet_probe --connect-timeout=5 -N -B -e \
  "SELECT GROUP_CONCAT(VARIABLE_VALUE ORDER BY VARIABLE_NAME) FROM information_schema.GLOBAL_STATUS WHERE VARIABLE_NAME IN ('wsrep_local_state', 'wsrep_ready')" 2>/dev/null)
[ "$state" = "4,ON" ]
