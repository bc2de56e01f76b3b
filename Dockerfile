# The workbench in a container.
#
#   docker build -t gyrebench .
#   docker run --rm -p 127.0.0.1:8080:8080 gyrebench
#
# Inside the container the workbench listens on 0.0.0.0:8080, the only way
# a published port can reach it; publish it on the host's loopback as above
# unless you mean to share it with the network (anyone who can reach it can
# control the runs). A browser on the host sends Host: localhost:PORT,
# which the workbench accepts; to reach it from other machines by a name,
# add that name: docker run ... gyrebench serve --addr 0.0.0.0:8080 --host NAME

FROM golang:1.26-bookworm AS build
WORKDIR /src
COPY go.mod go.sum ./
RUN go mod download
COPY . .
RUN CGO_ENABLED=0 go build -trimpath -buildvcs=false -ldflags="-s -w" -o /out/gyrebench .

FROM gcr.io/distroless/static-debian12:nonroot
COPY --from=build /out/gyrebench /usr/local/bin/gyrebench
USER nonroot:nonroot
EXPOSE 8080
# The workbench shuts down gracefully on an interrupt; docker stop sends it.
STOPSIGNAL SIGINT
ENTRYPOINT ["/usr/local/bin/gyrebench"]
CMD ["serve", "--addr", "0.0.0.0:8080"]
