package service

import (
	"crypto/sha256"
	"encoding/hex"
)

// HashToken is the stored form of an API token's secret: hex SHA-256. A
// slow password hash is unnecessary for 256-bit random secrets. The API's
// bearer check and the dashboard's sign-in both look tokens up by it.
func HashToken(secret string) string {
	h := sha256.Sum256([]byte(secret))
	return hex.EncodeToString(h[:])
}
