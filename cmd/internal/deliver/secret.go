package deliver

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
)

// ErrNoPassword is returned by ReadPassword when the source it was given holds no password.
var ErrNoPassword = errors.New("no SMTP password")

// ReadPassword reads the SMTP password from the environment variable envName, or, when path
// is set, from that file, which must be a regular file that only its owner, the user running
// caseweave, can read or write (mode 0600 or 0400): a password others can read is not a
// secret, so such a file is refused. One trailing line end is removed. The password is
// never part of an error message.
func ReadPassword(envName, path string, lookupEnv func(string) (string, bool)) (string, error) {
	if path != "" {
		return readSecretFile(path)
	}
	if envName == "" {
		return "", ErrNoPassword
	}
	v, ok := lookupEnv(envName)
	if !ok || v == "" {
		return "", fmt.Errorf("%w: the environment variable %s is not set", ErrNoPassword, envName)
	}
	return v, nil
}

func readSecretFile(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("the password file: %w", err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return "", fmt.Errorf("the password file: %w", err)
	}
	if !st.Mode().IsRegular() {
		return "", fmt.Errorf("the password file %s is not a regular file", path)
	}
	if perm := st.Mode().Perm(); perm&0o077 != 0 {
		return "", fmt.Errorf("the password file %s can be read or changed by others (mode %04o); make it the owner's only with: chmod 600 %s", path, perm, path)
	}
	if err := ownedByMe(st); err != nil {
		return "", fmt.Errorf("the password file %s: %w", path, err)
	}
	b, err := io.ReadAll(io.LimitReader(f, 4097))
	if err != nil {
		return "", fmt.Errorf("the password file: %w", err)
	}
	n := len(b)
	if n > 4096 {
		return "", fmt.Errorf("the password file %s is longer than 4096 bytes; it should hold the password alone", path)
	}
	pw := strings.TrimSuffix(strings.TrimSuffix(string(b[:n]), "\n"), "\r")
	if pw == "" {
		return "", fmt.Errorf("%w: the password file %s is empty", ErrNoPassword, path)
	}
	return pw, nil
}
