! fermiwell.f90 — a Fortran 2008 module over the C client (../c/fermiwell.c) through iso_c_binding,
! for hydro codes: `use fermiwell`, open a client once, then evaluate or invert whole arrays of
! zones per call (the binary form of the API; columns of n values, so a Fortran array a(n, k) is a
! request body as it stands).
!
!   use fermiwell
!   type(fermiwell_client) :: fw
!   call fw_open(fw)                                  ! FERMIWELL_URL, FERMIWELL_KEY from the environment
!   call fw_evaluate(fw, rho, temp, 'pressure,soundSpeed', state, status, 'mixture=c12-o16', ierr)
!   if (ierr /= FW_OK) print *, fw_error_message(fw)  ! e.g. "HTTP 401 invalid-api-key: ..."
!   ! status(i) /= 0: zone i was not computed (fw_status_name(status(i)) says why)
!   call fw_invert(fw, 'density,specificEnergy', rho, eint, 'temperature,pressure', state, status, &
!                  'mixture=c12-o16', ierr)
!   call fw_close(fw)
!
! Build: gfortran -c fermiwell.f90, and link with the C client and libcurl (see the Makefile).
module fermiwell
  use, intrinsic :: iso_c_binding, only: c_ptr, c_null_ptr, c_char, c_int, c_long, c_size_t, c_double, &
    c_null_char, c_associated, c_f_pointer
  implicit none
  private

  public :: fermiwell_client, fw_open, fw_close, fw_evaluate, fw_invert, fw_call, fw_post_json, &
    fw_error_message, fw_status_name, fw_http_status, fw_last_meta

  integer, parameter, public :: FW_OK = 0, FW_ERR_ARGUMENT = -1, FW_ERR_MEMORY = -2, &
    FW_ERR_TRANSPORT = -3, FW_ERR_HTTP = -4, FW_ERR_LAYOUT = -5

  !> One connection to the gateway (not shared between threads).
  type :: fermiwell_client
    type(c_ptr) :: handle = c_null_ptr
  end type fermiwell_client

  interface
    function c_fw_open(url, key) bind(C, name="fw_open") result(handle)
      import :: c_ptr, c_char
      character(kind=c_char), dimension(*), intent(in) :: url, key
      type(c_ptr) :: handle
    end function c_fw_open

    subroutine c_fw_close(handle) bind(C, name="fw_close")
      import :: c_ptr
      type(c_ptr), value :: handle
    end subroutine c_fw_close

    function c_fw_call(handle, operation, inputs, options, n, values_in, fields, values_out, status) &
        bind(C, name="fw_call") result(rc)
      import :: c_ptr, c_char, c_size_t, c_double, c_int
      type(c_ptr), value :: handle
      character(kind=c_char), dimension(*), intent(in) :: operation, inputs, options, fields
      integer(c_size_t), value :: n
      real(c_double), dimension(*), intent(in) :: values_in
      real(c_double), dimension(*), intent(out) :: values_out
      integer(c_int), dimension(*), intent(out) :: status
      integer(c_int) :: rc
    end function c_fw_call

    function c_fw_post_json(handle, path, body, response) bind(C, name="fw_post_json") result(rc)
      import :: c_ptr, c_char, c_int
      type(c_ptr), value :: handle
      character(kind=c_char), dimension(*), intent(in) :: path, body
      type(c_ptr), intent(out) :: response
      integer(c_int) :: rc
    end function c_fw_post_json

    subroutine c_fw_free(pointer) bind(C, name="fw_free")
      import :: c_ptr
      type(c_ptr), value :: pointer
    end subroutine c_fw_free

    function c_fw_error_message(handle) bind(C, name="fw_error_message") result(text)
      import :: c_ptr
      type(c_ptr), value :: handle
      type(c_ptr) :: text
    end function c_fw_error_message

    function c_fw_last_meta(handle) bind(C, name="fw_last_meta") result(text)
      import :: c_ptr
      type(c_ptr), value :: handle
      type(c_ptr) :: text
    end function c_fw_last_meta

    function c_fw_http_status(handle) bind(C, name="fw_http_status") result(code)
      import :: c_ptr, c_long
      type(c_ptr), value :: handle
      integer(c_long) :: code
    end function c_fw_http_status

    function c_fw_status_name(code) bind(C, name="fw_status_name") result(text)
      import :: c_int, c_ptr
      integer(c_int), value :: code
      type(c_ptr) :: text
    end function c_fw_status_name

    function c_strlen(text) bind(C, name="strlen") result(n)
      import :: c_ptr, c_size_t
      type(c_ptr), value :: text
      integer(c_size_t) :: n
    end function c_strlen
  end interface

contains

  !> Opens a client. url and key default to $FERMIWELL_URL and $FERMIWELL_KEY.
  !> ierr = FW_ERR_ARGUMENT when there is no key at all.
  subroutine fw_open(client, url, key, ierr)
    type(fermiwell_client), intent(out) :: client
    character(*), intent(in), optional :: url, key
    integer, intent(out), optional :: ierr
    character(:), allocatable :: u, k
    u = ''
    k = ''
    if (present(url)) u = trim(url)
    if (present(key)) k = trim(key)
    client%handle = c_fw_open(u // c_null_char, k // c_null_char)
    if (present(ierr)) then
      ierr = FW_OK
      if (.not. c_associated(client%handle)) ierr = FW_ERR_ARGUMENT
    end if
  end subroutine fw_open

  subroutine fw_close(client)
    type(fermiwell_client), intent(inout) :: client
    if (c_associated(client%handle)) call c_fw_close(client%handle)
    client%handle = c_null_ptr
  end subroutine fw_close

  !> The general call: operation 'evaluate' | 'invert' | 'regime'; inputs names the columns of
  !> values_in(n, k); fields names the columns of values_out(n, m); status(n) the per-point codes.
  subroutine fw_call(client, operation, inputs, values_in, fields, values_out, status, options, ierr)
    type(fermiwell_client), intent(in) :: client
    character(*), intent(in) :: operation, inputs, fields
    real(c_double), intent(in) :: values_in(:, :)
    real(c_double), intent(out) :: values_out(:, :)
    integer(c_int), intent(out) :: status(:)
    character(*), intent(in), optional :: options
    integer, intent(out) :: ierr
    character(:), allocatable :: opts
    integer :: n
    n = size(values_in, 1)
    if (.not. c_associated(client%handle) .or. n == 0 .or. size(values_out, 1) /= n .or. size(status) /= n &
        .or. size(values_in, 2) /= count_items(inputs) .or. size(values_out, 2) /= count_items(fields)) then
      ierr = FW_ERR_ARGUMENT
      return
    end if
    opts = ''
    if (present(options)) opts = trim(options)
    ierr = c_fw_call(client%handle, trim(operation) // c_null_char, trim(inputs) // c_null_char, &
      opts // c_null_char, int(n, c_size_t), values_in, trim(fields) // c_null_char, values_out, status)
  end subroutine fw_call

  !> Forward evaluation at (density, temperature): values(n, number of fields).
  subroutine fw_evaluate(client, density, temperature, fields, values, status, options, ierr)
    type(fermiwell_client), intent(in) :: client
    real(c_double), intent(in) :: density(:), temperature(:)
    character(*), intent(in) :: fields
    real(c_double), intent(out) :: values(:, :)
    integer(c_int), intent(out) :: status(:)
    character(*), intent(in), optional :: options
    integer, intent(out) :: ierr
    real(c_double), allocatable :: columns(:, :)
    if (size(temperature) /= size(density)) then
      ierr = FW_ERR_ARGUMENT
      return
    end if
    allocate (columns(size(density), 2))
    columns(:, 1) = density
    columns(:, 2) = temperature
    call fw_call(client, 'evaluate', 'density,temperature', columns, fields, values, status, options, ierr)
  end subroutine fw_evaluate

  !> Inversion from two given variables, e.g. given = 'density,specificEnergy' (temperature from
  !> density and energy) or 'pressure,temperature' (density).
  subroutine fw_invert(client, given, first, second, fields, values, status, options, ierr)
    type(fermiwell_client), intent(in) :: client
    character(*), intent(in) :: given, fields
    real(c_double), intent(in) :: first(:), second(:)
    real(c_double), intent(out) :: values(:, :)
    integer(c_int), intent(out) :: status(:)
    character(*), intent(in), optional :: options
    integer, intent(out) :: ierr
    real(c_double), allocatable :: columns(:, :)
    if (size(second) /= size(first)) then
      ierr = FW_ERR_ARGUMENT
      return
    end if
    allocate (columns(size(first), 2))
    columns(:, 1) = first
    columns(:, 2) = second
    call fw_call(client, 'invert', given, columns, fields, values, status, options, ierr)
  end subroutine fw_invert

  !> POST a JSON body (e.g. to '/v1/eos/evaluate'); response is the JSON answer (or the problem).
  subroutine fw_post_json(client, path, body, response, ierr)
    type(fermiwell_client), intent(in) :: client
    character(*), intent(in) :: path, body
    character(:), allocatable, intent(out) :: response
    integer, intent(out) :: ierr
    type(c_ptr) :: answer
    ierr = c_fw_post_json(client%handle, trim(path) // c_null_char, body // c_null_char, answer)
    response = from_c(answer)
    if (c_associated(answer)) call c_fw_free(answer)
  end subroutine fw_post_json

  !> The last error in words, with the problem+json title and detail of a refused request.
  function fw_error_message(client) result(text)
    type(fermiwell_client), intent(in) :: client
    character(:), allocatable :: text
    text = from_c(c_fw_error_message(client%handle))
  end function fw_error_message

  !> The last answer's meta (one line of JSON).
  function fw_last_meta(client) result(text)
    type(fermiwell_client), intent(in) :: client
    character(:), allocatable :: text
    text = from_c(c_fw_last_meta(client%handle))
  end function fw_last_meta

  integer function fw_http_status(client)
    type(fermiwell_client), intent(in) :: client
    fw_http_status = int(c_fw_http_status(client%handle))
  end function fw_http_status

  !> The name of a per-point status code, e.g. 4 -> 'TEMPERATURE_OUT_OF_RANGE'.
  function fw_status_name(code) result(text)
    integer(c_int), intent(in) :: code
    character(:), allocatable :: text
    text = from_c(c_fw_status_name(code))
  end function fw_status_name

  ! -- helpers --------------------------------------------------------------------------------

  function from_c(pointer) result(text)
    type(c_ptr), intent(in) :: pointer
    character(:), allocatable :: text
    character(kind=c_char), pointer :: chars(:)
    integer :: i, n
    if (.not. c_associated(pointer)) then
      text = ''
      return
    end if
    n = int(c_strlen(pointer))
    call c_f_pointer(pointer, chars, [n])
    allocate (character(n) :: text)
    do i = 1, n
      text(i:i) = chars(i)
    end do
  end function from_c

  integer function count_items(list)
    character(*), intent(in) :: list
    integer :: i
    count_items = 0
    if (len_trim(list) == 0) return
    count_items = 1
    do i = 1, len_trim(list)
      if (list(i:i) == ',') count_items = count_items + 1
    end do
  end function count_items

end module fermiwell
