//go:build stipple_cloud || stipple_s3

package sink

import _ "gocloud.dev/blob/s3blob" // registers its bucket URL scheme
