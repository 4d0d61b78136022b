// Validates docker-compose.yml offline when the v1 tool is installed
// (apt-get install docker-compose); says so and passes when it is not.
const { spawnSync } = require('node:child_process');

const which = spawnSync('sh', ['-c', 'command -v docker-compose'], { encoding: 'utf8' });
if (which.status !== 0) {
  console.warn('docker-compose not installed: compose file not validated (apt-get install -y docker-compose)');
  process.exit(0);
}
const result = spawnSync('docker-compose', ['-f', 'docker-compose.yml', 'config', '-q'], { encoding: 'utf8', stdio: 'inherit' });
process.exit(result.status ?? 1);
